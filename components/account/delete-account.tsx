"use client";

import { useCallback, useEffect, useState } from "react";
import { apiFetch, ApiFailure } from "@/lib/api/client";
import { blockerText, FORMER_MEMBER, type DeletionPreview } from "@/lib/account/deletion";
import { useLocalCore } from "@/components/sync/local-provider";
import { boundTo, Button, InputField, Notice } from "@/components/ui/controls";
import { useIsClient } from "@/components/ui/use-stored";
import { useFocusOnShow } from "@/components/ui/focus";

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;
const names = (xs: { name: string }[]) => xs.map((x) => x.name).join(", ");
/** The server's own words when it answered; without an answer, what no connection means here. */
const failure = (e: unknown, offline: string) => (e instanceof ApiFailure && e.status !== 0 ? e.message : offline);

/**
 * Deleting the account, from the account page: first what it will remove, end and keep (counted by
 * the server now), then the proof (the password, or a link mailed to the address for an account
 * without one), then the phone's own copy goes too. Nothing happens before the last button.
 */
export function DeleteAccount() {
  const { forget } = useLocalCore();
  const [preview, setPreview] = useState<DeletionPreview | null>(null);
  const [opened, setOpened] = useState(false);
  // the mailed link lands here (/account?delete=...); read once, and shown only after a tap or the effect below
  const [token, setToken] = useState<string | null>(() =>
    typeof window === "undefined" ? null : new URLSearchParams(window.location.search).get("delete"),
  );
  const [password, setPassword] = useState("");
  const [error, setError] = useState<string | null>(null);
  const [fieldError, setFieldError] = useState<string | undefined>();
  const [sent, setSent] = useState(false);
  const [busy, setBusy] = useState(false);
  const headingRef = useFocusOnShow<HTMLHeadingElement>(!!preview);

  const load = useCallback(
    () =>
      apiFetch<{ preview: DeletionPreview }>("/api/account/deletion").then(
        (r) => setPreview(r.preview),
        (e: unknown) =>
          setError(failure(e, "Could not read what the account holds: check the connection and try again.")),
      ),
    [],
  );
  const open = () => {
    setOpened(true);
    setError(null);
    void load();
  };
  // opened from the mailed link: the confirmation shows at once
  const isClient = useIsClient();
  const showing = opened || (isClient && !!token);

  useEffect(() => {
    if (token) void load();
  }, [load, token]);

  const askLink = async () => {
    setBusy(true);
    setError(null);
    try {
      await apiFetch("/api/account/deletion/link", { method: "POST" });
      setSent(true);
    } catch (e) {
      setError(failure(e, "Could not send the link: check the connection and try again."));
    } finally {
      setBusy(false);
    }
  };

  const confirm = async () => {
    setBusy(true);
    setError(null);
    setFieldError(undefined);
    try {
      await apiFetch("/api/account", { method: "DELETE", body: preview?.hasPassword ? { password } : { token } });
      // the server's copy is gone: the phone's goes too, unsent changes included (no account can take them
      // now), then a full load, so nothing of the account stays in the page's memory either
      await forget();
      // eslint-disable-next-line @next/next/no-location-assign-relative-destination
      window.location.href = "/account-deleted";
    } catch (e) {
      if (e instanceof ApiFailure && e.fields.password) setFieldError(e.fields.password);
      setError(failure(e, "No connection: nothing was deleted. Try again when online."));
    } finally {
      setBusy(false);
    }
  };

  return (
    <section className="flex flex-col gap-3 border-t border-line pt-4" aria-labelledby="delete-heading">
      <h2 id="delete-heading" className="text-xl font-bold">
        Delete the account
      </h2>
      {!showing && (
        <>
          <p className="text-ink-soft">
            Removes your garage and photos from Lashwright for good. You see exactly what goes before anything happens.
          </p>
          <Button type="button" look="plain" onClick={open}>
            Delete my account…
          </Button>
        </>
      )}
      {showing && !preview && !error && <p className="text-ink-soft">Counting what the account holds…</p>}
      {showing && preview && (
        <div className="flex flex-col gap-3 rounded-xl border-2 border-tight bg-surface p-3">
          <h3 ref={headingRef} tabIndex={-1} className="text-lg font-bold">
            What deleting does
          </h3>
          <div>
            <p className="font-bold">Removed for good</p>
            <ul className="list-disc pl-5">
              <li>
                {plural(preview.engines, "engine")}, {plural(preview.checks, "check")} and{" "}
                {plural(preview.readings, "reading")}
              </li>
              <li>{plural(preview.photos, "photo")} (yours, and any taken on your checks)</li>
              <li>{plural(preview.trayItems, "size", "sizes")} on your shim tray</li>
              {preview.soloClubs.length > 0 && (
                <li>
                  your club{preview.soloClubs.length > 1 ? "s" : ""} with no other member: {names(preview.soloClubs)}
                </li>
              )}
            </ul>
          </div>
          <div>
            <p className="font-bold">Ended</p>
            <ul className="list-disc pl-5">
              <li>
                {preview.shares
                  ? `${plural(preview.shares, "shared check")} withdrawn from review`
                  : "no checks shared with a club"}
              </li>
              <li>{preview.clubs.length ? `membership of ${names(preview.clubs)}` : "no club memberships"}</li>
              <li>every session: each phone signed in wipes its copy when it next reaches the server</li>
              <li>all mail to {preview.email}, at once</li>
            </ul>
          </div>
          <div>
            <p className="font-bold">Kept</p>
            <p>
              {preview.commentsKept
                ? `${plural(preview.commentsKept, "comment")} you wrote on other members' checks stay${preview.commentsKept === 1 ? "s" : ""} in their threads, shown as from “${FORMER_MEMBER}”, without your name.`
                : `Nothing: comments you write on other members' checks would stay, shown as from “${FORMER_MEMBER}”.`}
            </p>
          </div>
          {preview.blockers.length > 0 ? (
            <Notice tone="error">
              <p className="font-bold">Not yet: first</p>
              <ul className="list-disc pl-5">
                {preview.blockers.map((b) => (
                  <li key={b.kind === "last-admin" ? b.clubId : b.loanId}>{blockerText(b)}</li>
                ))}
              </ul>
            </Notice>
          ) : preview.hasPassword ? (
            <form
              className="flex flex-col gap-3"
              onSubmit={(e) => {
                e.preventDefault();
                void confirm();
              }}
            >
              <InputField
                id="delete-password"
                label="Your password, to confirm"
                error={fieldError}
                type="password"
                autoComplete="current-password"
                {...boundTo(password, setPassword)}
              />
              <Button type="submit" disabled={busy || password.length === 0}>
                {busy ? "Deleting…" : "Delete the account for good"}
              </Button>
            </form>
          ) : token ? (
            <Button type="button" disabled={busy} onClick={() => void confirm()}>
              {busy ? "Deleting…" : "Delete the account for good"}
            </Button>
          ) : sent ? (
            <Notice tone="ok">
              A link is on its way to {preview.email}. Open it on this phone to confirm; it works once, for 30 minutes.
            </Notice>
          ) : (
            <>
              <p>This account has no password: confirm through a link sent to {preview.email}.</p>
              <Button type="button" disabled={busy} onClick={() => void askLink()}>
                E-mail me the link to confirm
              </Button>
            </>
          )}
          <Button
            type="button"
            look="quiet"
            onClick={() => {
              setOpened(false);
              setToken(null);
              setPreview(null);
              setPassword("");
              setError(null);
            }}
          >
            Keep my account
          </Button>
        </div>
      )}
      {error && <Notice tone="error">{error}</Notice>}
    </section>
  );
}
