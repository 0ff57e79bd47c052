"use client";

import { useQuery } from "@tanstack/react-query";
import { useLiveQuery } from "@/components/sync/use-live-query";
import { useEffect, useMemo, useRef, useState } from "react";
import { fetchers, queryKeys } from "@/lib/api/client";
import { PHOTO_MAX_BYTES, PHOTO_MAX_LABEL, photoUrl, usageLabel } from "@/lib/photos/rules";
import { shrinkPhoto } from "@/lib/photos/shrink";
import { getMeta, queuePhoto } from "@/lib/sync/later";
import { USAGE_META } from "@/lib/sync/meta-keys";
import type { KnownUsage } from "@/lib/sync/photos";
import type { LocalPhoto } from "@/lib/sync/local-db";
import { useLocalCore } from "@/components/sync/local-provider";
import { Notice } from "@/components/ui/controls";

type Shown = {
  id: string;
  src: string | null;
  blob?: Blob;
  state: LocalPhoto["state"] | "stored";
  reason?: string;
  held?: boolean;
  by?: string;
};

function Thumb({ p, alt }: { p: Shown; alt: string }) {
  const blobUrl = useMemo(() => (p.blob ? URL.createObjectURL(p.blob) : null), [p.blob]);
  useEffect(() => () => void (blobUrl && URL.revokeObjectURL(blobUrl)), [blobUrl]);
  const url = blobUrl ?? p.src;
  return (
    <li className="flex w-28 shrink-0 flex-col gap-1">
      {url && (
        <a href={url} target="_blank" rel="noreferrer" className="block overflow-hidden rounded-lg border border-line">
          {/* a plain img: these are private photos behind the session, not static assets */}
          {/* eslint-disable-next-line @next/next/no-img-element */}
          <img src={url} alt={alt} className="h-28 w-28 object-cover" data-testid="photo" />
        </a>
      )}
      <span className="text-xs text-ink-soft">
        {p.state === "waiting"
          ? p.held
            ? "waiting for photo space"
            : "waiting to send"
          : p.state === "refused"
            ? `not sent: ${p.reason}`
            : p.by
              ? `by ${p.by}`
              : "sent"}
      </span>
    </li>
  );
}

/**
 * The photos of one valve (or the whole check): this phone's own from IndexedDB, sent or waiting,
 * and the ones others added from the server when there is a signal. Adding one stores it here
 * first; the next sync sends it.
 */
export function PhotoStrip({
  checkId,
  valve,
  commentId = null,
  canAdd = true,
  label,
}: {
  checkId: string;
  valve: string | null;
  commentId?: string | null;
  canAdd?: boolean;
  label: string;
}) {
  const belongs = (p: { valve: string | null; commentId: string | null }) =>
    commentId ? p.commentId === commentId : p.valve === valve && !p.commentId;
  const { db, user, syncNow, needDb } = useLocalCore();
  const input = useRef<HTMLInputElement>(null);
  const [error, setError] = useState<string | null>(null);
  const local = useLiveQuery(
    async () => (db ? (await db.photos.where("checkId").equals(checkId).toArray()).filter(belongs) : []),
    [db, checkId, valve, commentId],
    [],
  );
  const server = useQuery({
    queryKey: queryKeys.photos(checkId),
    queryFn: () => fetchers.photos(checkId),
    retry: false,
  });
  // the account's photo space: from the server when there is a signal, else as the last sync heard it
  const fetched = useQuery({
    queryKey: queryKeys.photoUsage(),
    queryFn: fetchers.photoUsage,
    retry: false,
    enabled: canAdd,
  });
  const synced = useLiveQuery(
    async () => (db ? ((await getMeta<KnownUsage>(db, USAGE_META)) ?? null) : null),
    [db],
    null,
  );
  const usage = fetched.data && (!synced || fetched.dataUpdatedAt >= synced.at) ? fetched.data : synced;
  const heldFor = local.find((p) => p.state === "waiting" && p.held);
  const mine = new Set(local.map((p) => p.id));
  const shown: Shown[] = [
    ...local.map((p) => ({ id: p.id, src: null, blob: p.blob, state: p.state, reason: p.reason, held: !!p.held })),
    ...(server.data ?? [])
      .filter((p) => belongs(p) && !mine.has(p.id))
      .map((p) => ({ id: p.id, src: photoUrl(p.id), state: "stored" as const, by: p.uploaderName })),
  ];
  if (!canAdd && shown.length === 0) return null;
  return (
    <div className="flex flex-col gap-2">
      {shown.length > 0 && (
        <ul className="-m-1.5 flex gap-2 overflow-x-auto p-1.5" aria-label={`Photos: ${label}`}>
          {shown.map((p) => (
            <Thumb key={p.id} p={p} alt={`Photo of ${label}`} />
          ))}
        </ul>
      )}
      {canAdd && user && (
        <div className="flex flex-wrap items-center gap-2">
          <input
            ref={input}
            type="file"
            accept="image/jpeg,image/png,image/webp"
            capture="environment"
            className="sr-only"
            // the button beside it opens it: one Tab stop, and never an invisible focused control
            tabIndex={-1}
            aria-label={`Add a photo of ${label}`}
            onChange={async (e) => {
              const file = e.target.files?.[0];
              e.target.value = "";
              if (!file) return;
              if (file.size > PHOTO_MAX_BYTES) return setError(`That photo is over ${PHOTO_MAX_LABEL}`);
              setError(null);
              await queuePhoto(await needDb(), { checkId, valve, blob: await shrinkPhoto(file) });
              if (navigator.onLine) void syncNow();
            }}
          />
          <button
            type="button"
            onClick={() => input.current?.click()}
            className="min-h-12 rounded-xl border-2 border-line px-4 font-bold"
          >
            Add photo
          </button>
          <span className="text-xs text-ink-soft">
            JPEG, PNG or WebP, up to {PHOTO_MAX_LABEL}; location data is removed.
            {usage && <> Photo space: {usageLabel(usage)}.</>}
          </span>
        </div>
      )}
      {heldFor && (
        <Notice tone="error">
          Not sent yet:{" "}
          {heldFor.reason ?? "your photo space is full. The photo waits on this phone until there is room."}
        </Notice>
      )}
      {error && <Notice tone="error">{error}</Notice>}
    </div>
  );
}
