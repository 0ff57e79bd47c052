import { pushInput } from "@/lib/sync/mutations";
import { route } from "@/server/http";
import { push } from "@/server/sync";

/** Apply a batch from the device's outbox; answers the last applied id and what was refused. */
export const POST = route({ body: pushInput }, async ({ user, body }) => push(user, body));
