import { photoFields } from "../photos/rules";
import { LashInputError } from "../lash";
import type { LocalDb, LocalPhoto } from "./local-db";
import { send, type Fetch } from "./transport";

/**
 * The phone's photo queue. A photo is stored in IndexedDB at once (it survives a closed page) and
 * sent on the next sync, after the outbox so a comment it belongs to is already there. The photo's
 * id is made here, so a send whose answer was lost is recognised by the server, not stored twice.
 */
export async function queuePhoto(db: LocalDb, p: { checkId: string; valve?: string | null; commentId?: string | null; blob: Blob }): Promise<string> {
  const id = crypto.randomUUID();
  const f = photoFields.safeParse({ id, valve: p.valve ?? null, commentId: p.commentId ?? null });
  if (!f.success) throw new LashInputError(f.error.issues[0]!.message);
  await db.photos.add({ id, checkId: p.checkId, valve: p.valve ?? null, commentId: p.commentId ?? null, blob: p.blob, takenAt: Date.now(), state: "waiting" });
  return id;
}

/**
 * Send every waiting photo. A refusal (not a photo, too large) is kept with its reason; a server
 * failure leaves the photo waiting for the next sync and the queue moves on. No connection, a
 * saturated server or a lost session stop the queue (the caller decides what to tell the user).
 */
export async function uploadPhotos(db: LocalDb, fetcher: Fetch, base = ""): Promise<{ sent: number; refused: number; failed: number }> {
  const waiting: LocalPhoto[] = await db.photos.where("state").equals("waiting").sortBy("takenAt");
  let sent = 0;
  let refused = 0;
  let failed = 0;
  for (const p of waiting) {
    const form = new FormData();
    form.set("id", p.id);
    if (p.valve) form.set("valve", p.valve);
    if (p.commentId) form.set("commentId", p.commentId);
    form.set("file", p.blob, `${p.id}.jpg`);
    const res = await send(fetcher, `${base}/api/checks/${p.checkId}/photos`, { method: "POST", body: form });
    if (res.ok) {
      await db.photos.update(p.id, { state: "sent" });
      sent++;
    } else if (res.status >= 400 && res.status < 500 && res.status !== 408 && res.status !== 429) {
      const body = (await res.json().catch(() => null)) as { error?: { message?: string } } | null;
      await db.photos.update(p.id, { state: "refused", reason: body?.error?.message ?? `refused (${res.status})` });
      refused++;
    } else failed++; // a 5xx: it stays waiting for the next sync
  }
  return { sent, refused, failed };
}
