"use client";

import { useState, type ReactNode } from "react";
import type { ApiComment } from "@/lib/api/client";
import { PHOTO_MAX_BYTES, PHOTO_MAX_LABEL } from "@/lib/photos/rules";
import { Button, Field, inputClass } from "@/components/ui/controls";

/** Comments on the whole check or on one valve, oldest first, with a box to add one. */
export type ThreadComment = ApiComment & { pending?: boolean };

export function CommentThread({
  comments,
  valves,
  onAdd,
  busy,
  photosOf,
}: {
  comments: ThreadComment[];
  valves: string[];
  onAdd: (body: string, valve: string | null, photo: File | null) => Promise<void>;
  busy?: boolean;
  photosOf?: (commentId: string) => ReactNode;
}) {
  const [body, setBody] = useState("");
  const [valve, setValve] = useState("");
  const [photo, setPhoto] = useState<File | null>(null);
  const [photoKey, setPhotoKey] = useState(0);
  const [error, setError] = useState<string | null>(null);
  return (
    <section id="comments" aria-labelledby="comments-title" className="flex scroll-mt-4 flex-col gap-3">
      <h2 id="comments-title" className="text-xl font-extrabold">
        Comments
      </h2>
      {comments.length === 0 && <p className="text-ink-soft">No comments yet.</p>}
      <ol className="flex flex-col gap-2">
        {comments.map((c) => (
          <li key={c.id} className="rounded-xl border border-line bg-surface p-3">
            <p className="text-sm text-ink-soft">
              <strong className="text-ink">{c.authorName}</strong> {c.valve ? <>on <span className="figures font-bold">{c.valve}</span></> : "on the whole check"} · {new Date(c.createdAt).toLocaleString("en-GB", { dateStyle: "short", timeStyle: "short" })}
            </p>
            <p className="whitespace-pre-wrap">{c.body}</p>
            {c.pending && <p className="text-sm font-bold text-ink-soft">waiting to send</p>}
            {photosOf?.(c.id)}
          </li>
        ))}
      </ol>
      <form
        className="flex flex-col gap-2"
        onSubmit={async (e) => {
          e.preventDefault();
          if (!body.trim()) return setError("Write something first");
          setError(null);
          try {
            await onAdd(body.trim(), valve || null, photo);
            setBody("");
            setPhoto(null);
            setPhotoKey((k) => k + 1);
          } catch (err) {
            setError(err instanceof Error ? err.message : "Could not add the comment");
          }
        }}
      >
        <Field id="comment-body" label="Add a comment" error={error ?? undefined}>
          <textarea id="comment-body" rows={3} value={body} onChange={(e) => setBody(e.target.value)} className={`${inputClass} py-2`} />
        </Field>
        <Field id="comment-valve" label="About">
          <select id="comment-valve" value={valve} onChange={(e) => setValve(e.target.value)} className={inputClass}>
            <option value="">the whole check</option>
            {valves.map((v) => (
              <option key={v} value={v}>
                valve {v}
              </option>
            ))}
          </select>
        </Field>
        <Field id="comment-photo" label="Attach a photo (optional)" hint={`JPEG, PNG or WebP, up to ${PHOTO_MAX_LABEL}; location data is removed`}>
          <input
            key={photoKey}
            id="comment-photo"
            type="file"
            accept="image/jpeg,image/png,image/webp"
            className="min-h-12 py-2"
            onChange={(e) => {
              const f = e.target.files?.[0] ?? null;
              if (f && f.size > PHOTO_MAX_BYTES) {
                setError(`That photo is over ${PHOTO_MAX_LABEL}`);
                e.target.value = "";
                return setPhoto(null);
              }
              setPhoto(f);
            }}
          />
        </Field>
        <Button type="submit" look="plain" disabled={busy}>
          Post comment
        </Button>
      </form>
    </section>
  );
}
