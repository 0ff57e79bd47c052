import type { z } from "zod";
import type { pullInput, pushInput } from "../sync/mutations";
import { postJson, type Fetch } from "../sync/transport";
import type { PullAnswer, PushAnswer } from "./client";

/**
 * The sync protocol's two calls, sent through the phone's transport (lib/sync/transport.ts), whose
 * errors say what to do about a failure (Offline, SignedOut, ServerBusy, ServerError) rather than
 * ApiFailure: the background sync (lib/sync/phone-sync.ts) acts on them. `base` is the server's origin
 * ("" on the phone; the load and fault tests name theirs). Apart from ./client.ts because it
 * is loaded only with the sync engine: a bundler keeps a module whole, and a page that only reads
 * must not carry the sync client (tests/e2e/page-weight.test.ts).
 */
export const syncCalls = {
  push: (fetcher: Fetch, base: string, body: z.input<typeof pushInput>) =>
    postJson<PushAnswer>(fetcher, `${base}/api/sync/push`, body, "sync/push"),
  pull: (fetcher: Fetch, base: string, body: z.input<typeof pullInput>) =>
    postJson<PullAnswer>(fetcher, `${base}/api/sync/pull`, body, "sync/pull"),
};
