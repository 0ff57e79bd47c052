import { pushInput } from "@/lib/sync/mutations";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { push } from "@/server/sync";
import { phase, timed } from "@/server/timing";

/** Apply a batch from the device's outbox; answers the last applied id and what was refused. */
export const POST = timed(
  route({ response: answers.push, body: pushInput }, async ({ user, body }) => {
    // the session and the body (read, JSON, the batch's outer shape) are route()'s work
    phase("route");
    return push(user, body);
  }),
);
