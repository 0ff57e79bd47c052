import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";

/**
 * The process answers: no database, no session, nothing read. A load balancer or a supervisor
 * restarts an instance that stops answering this; whether it should get requests is /ready's answer.
 */
export const GET = route(
  { response: answers.live, auth: false, session: false },
  async () =>
    new Response(JSON.stringify({ status: "live" }), {
      headers: { "content-type": "application/json", "cache-control": "no-store" },
    }),
);
