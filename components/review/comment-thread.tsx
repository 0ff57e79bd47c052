"use client";

import { useState, type ReactNode } from "react";
import type { ApiComment } from "@/lib/api/client";
import { PHOTO_MAX_BYTES, PHOTO_MAX_LABEL } from "@/lib/photos/rules";
import { Button, Field, inputClass } from "@/components/ui/controls";

/** Comments on the whole check or on one valve, oldest first, with a box to add one. */
export type ThreadComment = ApiComment & { pending?: boolean };
type OnAdd = (body: string, valve: string | null, photo: File | null) => Promise<void>;

/** The id a comment's own link lands on (`/review?id=...#comment-<id>`). */
export const commentAnchor = (id: string) => `comment-${id}`;

/** One comment; the one in the thread carries the anchor a link lands on, and takes focus there. */
export function CommentItem({
  c,
  anchored = false,
  mine = false,
  photosOf,
}: {
  c: ThreadComment;
  anchored?: boolean;
  mine?: boolean;
  photosOf?: (commentId: string) => ReactNode;
}) {
  return (
    <li
      id={anchored ? commentAnchor(c.id) : undefined}
      data-mine={mine ? "true" : undefined}
      tabIndex={anchored ? -1 : undefined}
      className="scroll-mt-4 rounded-xl border border-line bg-surface p-3"
    >
      <p className="text-sm text-ink-soft">
        <strong className="text-ink">{c.authorName}</strong>{" "}
        {c.valve ? (
          <>
            on <span className="figures font-bold">{c.valve}</span>
          </>
        ) : (
          "on the whole check"
        )}{" "}
        · {new Date(c.createdAt).toLocaleString("en-GB", { dateStyle: "short", timeStyle: "short" })}
      </p>
      <p className="break-words whitespace-pre-wrap">{c.body}</p>
      {c.pending && <p className="text-sm font-bold text-ink-soft">waiting to send</p>}
      {photosOf?.(c.id)}
    </li>
  );
}

/**
 * The box to add a comment: about one valve when `valve` is given (the valve tapped on the diagram),
 * otherwise with a choice of the whole check or any valve (the way in for a keyboard).
 */
export function CommentForm({
  idPrefix,
  onAdd,
  valve,
  valves,
  busy,
}: {
  idPrefix: string;
  onAdd: OnAdd;
  valve?: string;
  valves?: string[];
  busy?: boolean;
}) {
  const [body, setBody] = useState("");
  const [chosen, setChosen] = useState("");
  const [photo, setPhoto] = useState<File | null>(null);
  const [photoKey, setPhotoKey] = useState(0);
  const [error, setError] = useState<string | null>(null);
  return (
    <form
      className="flex flex-col gap-2"
      onSubmit={async (e) => {
        e.preventDefault();
        if (!body.trim()) return setError("Write something first");
        setError(null);
        try {
          await onAdd(body.trim(), valve ?? (chosen || null), photo);
          setBody("");
          setPhoto(null);
          setPhotoKey((k) => k + 1);
        } catch (err) {
          setError(err instanceof Error ? err.message : "Could not add the comment");
        }
      }}
    >
      <Field id={`${idPrefix}-body`} label={valve ? `Comment on ${valve}` : "Add a comment"} error={error ?? undefined}>
        <textarea
          id={`${idPrefix}-body`}
          rows={3}
          value={body}
          onChange={(e) => setBody(e.target.value)}
          className={`${inputClass} py-2`}
        />
      </Field>
      {!valve && valves && (
        <Field id={`${idPrefix}-valve`} label="About">
          <select
            id={`${idPrefix}-valve`}
            value={chosen}
            onChange={(e) => setChosen(e.target.value)}
            className={inputClass}
          >
            <option value="">the whole check</option>
            {valves.map((v) => (
              <option key={v} value={v}>
                valve {v}
              </option>
            ))}
          </select>
        </Field>
      )}
      <Field
        id={`${idPrefix}-photo`}
        label="Attach a photo (optional)"
        hint={`JPEG, PNG or WebP, up to ${PHOTO_MAX_LABEL}; location data is removed`}
      >
        <input
          key={photoKey}
          id={`${idPrefix}-photo`}
          type="file"
          accept="image/jpeg,image/png,image/webp"
          className="min-h-12 w-full max-w-full py-2"
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
        {valve ? `Post comment on ${valve}` : "Post comment"}
      </Button>
    </form>
  );
}

export function CommentThread({
  comments,
  valves,
  onAdd,
  busy,
  photosOf,
  me,
}: {
  comments: ThreadComment[];
  valves: string[];
  onAdd: OnAdd;
  busy?: boolean;
  photosOf?: (commentId: string) => ReactNode;
  me?: string;
}) {
  return (
    <section id="comments" tabIndex={-1} aria-labelledby="comments-title" className="flex scroll-mt-4 flex-col gap-3">
      <h2 id="comments-title" className="text-xl font-extrabold">
        Comments
      </h2>
      {comments.length === 0 && <p className="text-ink-soft">No comments yet.</p>}
      <ol className="flex flex-col gap-2">
        {comments.map((c) => (
          <CommentItem key={c.id} c={c} anchored mine={!!me && c.authorId === me} photosOf={photosOf} />
        ))}
      </ol>
      <CommentForm idPrefix="comment" onAdd={onAdd} valves={valves} busy={busy} />
    </section>
  );
}
