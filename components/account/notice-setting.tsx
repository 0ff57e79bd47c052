"use client";

import { useEffect, useState } from "react";
import { fetchers, mutations, type Me } from "@/lib/api/client";
import { Notice } from "@/components/ui/controls";

/** The account's notice setting: what a mail's unsubscribe turned off is turned back on here. */
export function NoticeSetting() {
  const [me, setMe] = useState<Me | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [saving, setSaving] = useState(false);
  useEffect(() => {
    fetchers
      .me()
      .then(setMe, () => setError("The account could not be read: check the connection and open the page again."));
  }, []);
  const set = async (on: boolean) => {
    setSaving(true);
    setError(null);
    try {
      setMe((await mutations.settings({ noticesByEmail: on })).user);
    } catch {
      setError("Not saved: check the connection and try again.");
    } finally {
      setSaving(false);
    }
  };
  if (error && !me) return <Notice tone="error">{error}</Notice>;
  if (!me) return <p className="text-ink-soft">Reading your account…</p>;
  return (
    <section className="flex flex-col gap-3" aria-labelledby="notices-heading">
      <h2 id="notices-heading" className="text-xl font-bold">
        E-mail notices
      </h2>
      <label className="flex min-h-12 items-center gap-3 text-lg">
        <input
          type="checkbox"
          className="size-6"
          checked={me.noticesByEmail}
          disabled={saving}
          onChange={(e) => void set(e.target.checked)}
        />
        E-mail me about comments, verdicts, review requests and shim loans
      </label>
      <p className="text-sm text-ink-soft">
        They come gathered, at most one mail every few minutes, to {me.email}. Sign-in links and password mails always
        come.
      </p>
      {error && <Notice tone="error">{error}</Notice>}
    </section>
  );
}
