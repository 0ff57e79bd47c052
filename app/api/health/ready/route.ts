import { NextResponse } from "next/server";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { ADVISORY, readiness, type CheckName } from "@/server/health";

/**
 * May this instance be given requests? 200 when every check of server/health.ts passes, else 503
 * naming the checks that failed; the load balancer checks it every second or so, and the answer is
 * kept a second, so that costs one probe a second. An advisory check that fails (a stuck notice
 * queue) is named in `warnings` and leaves the answer 200. No sign-in and no session read: the body
 * says which check failed and nothing about anyone's data (counts and seconds only).
 */
export const GET = route({ response: answers.ready, auth: false, session: false }, async () => {
  const r = await readiness();
  const named = (advisory: boolean) =>
    Object.entries(r.checks)
      .filter(([name, c]) => !c.ok && !c.skipped && ADVISORY.includes(name as CheckName) === advisory)
      .map(([name]) => name);
  return NextResponse.json(
    { status: r.ok ? "ready" : "not ready", failed: named(false), warnings: named(true), checks: r.checks },
    { status: r.ok ? 200 : 503, headers: { "cache-control": "no-store" } },
  );
});
