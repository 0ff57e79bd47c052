import { z } from "zod";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { openExport, startExport } from "@/server/account-export";

/** Spend one export of the hour's budget and get the download's address (a ticket good for two minutes). The body is `{}`. */
export const POST = route({ response: answers.exportTicket, body: z.strictObject({}) }, async ({ user }) =>
  startExport(user),
);

const query = z.object({ ticket: z.string().min(10).max(200) });

/** The zip itself, streamed while it is written; a plain navigation, so the browser saves it as it comes. */
export const GET = route({ response: answers.notJson, query }, async ({ user, query }) =>
  openExport(user, query.ticket),
);
