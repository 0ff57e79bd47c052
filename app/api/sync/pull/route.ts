import { pullInput } from "@/lib/sync/mutations";
import { route } from "@/server/http";
import { pull } from "@/server/sync";

/** Everything of the caller's that changed after the cursor (null: everything), with tombstones. */
export const POST = route({ body: pullInput }, async ({ user, body }) => pull(user, body.cursor));
