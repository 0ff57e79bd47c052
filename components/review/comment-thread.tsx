"use client";

import { useState } from "react";
import type { ApiComment } from "@/lib/api/client";
import { Button, Field, inputClass } from "@/components/ui/controls";

/** Comments on the whole check or on one valve, oldest first, with a box to add one. */
export function CommentThread({ comments, valves, onAdd, busy }: { comments: ApiComment[]; valves: string[]; onAdd: (body: string, valve: string | null) => Promise<void>; busy?: boolean }) {
  const [body, setBody] = useState("");
  const [valve, setValve] = useState("");
  const [error, setError] = useState<string | null>(null);
  return (
    <section aria-labelledby="comments-title" className="flex flex-col gap-3">
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
            await onAdd(body.trim(), valve || null);
            setBody("");
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
        <Button type="submit" look="plain" disabled={busy}>
          Post comment
        </Button>
      </form>
    </section>
  );
}
