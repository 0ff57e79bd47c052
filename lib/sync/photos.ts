import { PHOTO_QUOTA_CODE, photoFields, type PhotoUsage } from "../photos/rules";
import { LashInputError } from "../lash";
import { setMeta, type LocalDb, type LocalPhoto } from "./local-db";
import { send, SignedOut, UPLOAD_TIMEOUT_MS, type Fetch } from "./transport";
import { USAGE_META } from "./meta-keys";

/**
 * The phone's photo queue. A photo is stored in IndexedDB at once (it survives a closed page) and
 * sent on the next sync, after the outbox so a comment it belongs to is already there. The photo's
 * id is made here, so a send whose answer was lost is recognised by the server, not stored twice.
 */
export async function queuePhoto(
  db: LocalDb,
  p: { checkId: string; valve?: string | null; commentId?: string | null; blob: Blob },
): Promise<string> {
  const id = crypto.randomUUID();
  const f = photoFields.safeParse({ id, valve: p.valve ?? null, commentId: p.commentId ?? null });
  if (!f.success) throw new LashInputError(f.error.issues[0]!.message);
  await db.photos.add({
    id,
    checkId: p.checkId,
    valve: p.valve ?? null,
    commentId: p.commentId ?? null,
    blob: p.blob,
    takenAt: Date.now(),
    state: "waiting",
  });
  return id;
}

/** The account's photo space as last heard from the server, with when (the strip shows it offline too). */
export type KnownUsage = PhotoUsage & { at: number };
export { USAGE_META };

async function fetchUsage(db: LocalDb, fetcher: Fetch, base: string): Promise<PhotoUsage | null> {
  const res = await send(fetcher, `${base}/api/photos/usage`, { method: "GET" }).catch((e: unknown) => {
    if (e instanceof SignedOut) throw e;
    return null;
  });
  if (!res?.ok) return null;
  const u = (await res.json().catch(() => null)) as PhotoUsage | null;
  if (u && typeof u.usedBytes === "number" && typeof u.quotaBytes === "number") {
    await setMeta(db, USAGE_META, {
      usedBytes: u.usedBytes,
      quotaBytes: u.quotaBytes,
      at: Date.now(),
    } satisfies KnownUsage);
    return u;
  }
  return null;
}

/**
 * Send every waiting photo. A refusal (not a photo, too large) is kept with its reason; a server
 * failure leaves the photo waiting for the next sync and the queue moves on. No connection, a
 * saturated server or a spent upload budget (503/429) or a lost session stop the queue (the caller
 * decides what to tell the user). A photo the account's space has no room for stays waiting, with
 * the server's words, and is not sent again until the space has changed: nothing is deleted.
 */
export async function uploadPhotos(
  db: LocalDb,
  fetcher: Fetch,
  base = "",
): Promise<{ sent: number; refused: number; failed: number; held: number }> {
  const waiting: LocalPhoto[] = await db.photos.where("state").equals("waiting").sortBy("takenAt");
  let sent = 0;
  let refused = 0;
  let failed = 0;
  let held = 0;
  // a photo held for space is tried again only once the space has changed since (one small request)
  const usage = waiting.some((p) => p.held) ? await fetchUsage(db, fetcher, base) : null;
  for (const p of waiting) {
    if (p.held && !(usage && (usage.usedBytes < p.held.usedBytes || usage.quotaBytes > p.held.quotaBytes))) {
      held++;
      continue;
    }
    const form = new FormData();
    form.set("id", p.id);
    if (p.valve) form.set("valve", p.valve);
    if (p.commentId) form.set("commentId", p.commentId);
    form.set("file", p.blob, `${p.id}.jpg`);
    const res = await send(
      fetcher,
      `${base}/api/checks/${p.checkId}/photos`,
      { method: "POST", body: form },
      UPLOAD_TIMEOUT_MS,
    );
    if (res.ok) {
      const body = (await res.json().catch(() => null)) as { usage?: PhotoUsage } | null;
      await db.photos.update(p.id, { state: "sent", reason: undefined, held: undefined });
      if (body?.usage) await setMeta(db, USAGE_META, { ...body.usage, at: Date.now() } satisfies KnownUsage);
      sent++;
    } else if (res.status >= 400 && res.status < 500 && res.status !== 408 && res.status !== 429) {
      const body = (await res.json().catch(() => null)) as { error?: { code?: string; message?: string } } | null;
      const reason = body?.error?.message ?? `refused (${res.status})`;
      if (body?.error?.code === PHOTO_QUOTA_CODE) {
        // kept in the queue, shown with the reason; the others would not fit either, so the queue stops
        const now = await fetchUsage(db, fetcher, base);
        await db.photos.update(p.id, {
          reason,
          held: now
            ? { usedBytes: now.usedBytes, quotaBytes: now.quotaBytes }
            : { usedBytes: Number.MAX_SAFE_INTEGER, quotaBytes: 0 },
        });
        held++;
        break;
      }
      await db.photos.update(p.id, { state: "refused", reason });
      refused++;
    } else failed++; // a 5xx: it stays waiting for the next sync
  }
  return { sent, refused, failed, held };
}
