import { NextResponse } from "next/server";
import { z } from "zod";
import { env } from "@/lib/env";
import { DomainError } from "@/lib/errors";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { unsubscribe } from "@/server/notices";

const query = z.object({ token: z.string().min(1).max(600) });

/**
 * RFC 8058 one-click unsubscribe: the mail provider POSTs here (body "List-Unsubscribe=One-Click",
 * no cookies, from its own servers, so not from our pages) and our /unsubscribe page does the same
 * for a reader who opened the link. The signed token in the address is the only authority needed
 * and all it can do is stop mail; it turns off that address's notices (an account's setting, which
 * the account page turns back on) or, for an address with no account, all but account mail.
 */
export const POST = route(
  { response: answers.unsubscribed, query, auth: false, anyOrigin: true },
  async ({ query }) => {
    if (!(await unsubscribe(query.token)))
      throw new DomainError("bad_request", "This unsubscribe link is not one of ours", { code: "bad_token" });
    return { stopped: true as const };
  },
);

/**
 * A mail client without one-click support opens the same address in a browser: a GET changes nothing
 * (link scanners and previews fetch addresses on their own, RFC 8058 3.2) and leads to the page that
 * asks first.
 */
export const GET = route({ response: answers.notJson, query, auth: false }, async ({ query }) =>
  NextResponse.redirect(
    `${env().NEXTAUTH_URL.replace(/\/$/, "")}/unsubscribe?token=${encodeURIComponent(query.token)}`,
    303,
  ),
);
