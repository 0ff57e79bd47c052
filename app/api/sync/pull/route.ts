import { pullInput } from "@/lib/sync/mutations";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { pull } from "@/server/sync";

/** Everything of the caller's that changed after the cursor (null: everything), with tombstones. */
export const POST = route({ response: answers.pull, body: pullInput }, async ({ user, body }) =>
  pull(user, body.cursor),
);
