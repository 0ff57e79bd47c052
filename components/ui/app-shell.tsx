"use client";

import Link from "next/link";
import { usePathname, useSearchParams } from "next/navigation";
import { Suspense, useSyncExternalStore, type ReactNode } from "react";
import { useLocal } from "@/components/sync/local-provider";
import { StorageNotice } from "@/components/sync/storage-notice";
import { SyncLine } from "@/components/sync/sync-line";
import { UpdateNotice } from "@/components/sync/update-notice";
import { ButtonLink, Notice } from "./controls";

const PLACES = [
  { href: "/engines", also: ["/engine"], label: "Engines", glyph: "⚙" },
  { href: "/checks", also: ["/check"], label: "Checks", glyph: "✎" },
  { href: "/tray", also: [], label: "Tray", glyph: "▤" },
  { href: "/club", also: [], label: "Club", glyph: "☰" },
];

/**
 * The signed-in frame. The identity comes from the phone (no server round trip), so it opens in a
 * garage with no signal; the server checks the session on every sync.
 */
export function AppShell({
  title,
  children,
  back,
}: {
  title: string;
  children: ReactNode;
  back?: { href: string; label: string };
}) {
  const path = usePathname();
  const { user, ready, forget, waiting, state, revoked } = useLocal();
  const signOut = async () => {
    // changes not yet on the server would be lost with the local database: say so first
    if (
      waiting > 0 &&
      !window.confirm(
        `${waiting === 1 ? "1 change on this phone is" : `${waiting} changes on this phone are`} not on the server yet. Signing out deletes ${waiting === 1 ? "it" : "them"}. Sign out anyway?`,
      )
    )
      return;
    await forget();
    // loaded on the tap: next-auth's client is not needed by any garage screen before it
    const { signOut: endSession } = await import("next-auth/react");
    await endSession({ redirect: false }).catch(() => undefined);
    await forget(); // again: a copy of the kept queries may have been written meanwhile
    // a full load, not a client navigation: nothing of this user stays in the page's memory either
    // eslint-disable-next-line @next/next/no-location-assign-relative-destination
    window.location.href = "/";
  };
  // nobody known on this phone yet: ask for a sign-in only once the server has said so (or cannot be
  // reached), not in the moment just after signing in while the identity is still on its way
  const answered = state === "signed-out" || state === "offline";
  return (
    <div className="mx-auto flex min-h-dvh max-w-xl flex-col">
      <a
        href="#content"
        className="sr-only focus:not-sr-only focus:absolute focus:top-2 focus:left-2 focus:z-50 focus:inline-flex focus:min-h-12 focus:items-center focus:rounded-xl focus:bg-accent focus:px-4 focus:font-bold focus:text-accent-ink"
      >
        Skip to content
      </a>
      <header className="flex flex-col gap-1 border-b border-line px-4 pt-3 pb-1 print:hidden">
        <div className="flex flex-wrap items-center justify-between gap-x-2">
          <Link href="/engines" className="inline-flex min-h-12 items-center text-xl font-extrabold tracking-tight">
            Lash<span className="text-accent">wright</span>
          </Link>
          {user && (
            <div className="flex min-w-0 items-center">
              <Link
                href="/account"
                className="inline-flex min-h-12 shrink-0 items-center rounded-xl px-3 text-sm font-bold whitespace-nowrap text-ink-soft underline"
              >
                Account
              </Link>
              <button
                type="button"
                onClick={() => void signOut()}
                className="inline-flex min-h-12 items-center rounded-xl px-3 text-sm font-bold text-ink-soft underline"
              >
                Sign out {user.name.split(" ")[0]}
              </button>
            </div>
          )}
        </div>
        {user && <SyncLine />}
        <UpdateNotice />
        {/* the release a build was made as, when it was given one (set at build time) */}
        {process.env.NEXT_PUBLIC_LASHWRIGHT_RELEASE && (
          <p className="text-xs text-ink-soft" data-testid="release">
            Release {process.env.NEXT_PUBLIC_LASHWRIGHT_RELEASE}
          </p>
        )}
      </header>
      <main id="content" tabIndex={-1} className="flex flex-1 flex-col gap-5 px-4 pt-4 pb-28 outline-none">
        {back && (
          <Link href={back.href} className="-mb-3 inline-flex min-h-12 items-center font-bold text-ink-soft">
            ‹ {back.label}
          </Link>
        )}
        <h1 className="text-3xl font-extrabold">{title}</h1>
        {user && <StorageNotice />}
        {!ready ? null : user ? (
          children
        ) : !answered ? (
          <p className="text-ink-soft">Checking who is signed in…</p>
        ) : (
          <div className="flex flex-col gap-3">
            {revoked && <Notice>{revokedText(revoked)}</Notice>}
            <Notice>Sign in once with a signal; after that this phone keeps your work even with none.</Notice>
            <Suspense fallback={<SignInHere path={path} query="" />}>
              <SignInWithQuery path={path} />
            </Suspense>
          </div>
        )}
      </main>
      <nav aria-label="Places" className="fixed inset-x-0 bottom-0 border-t border-line bg-surface print:hidden">
        <ul className="mx-auto grid max-w-xl grid-cols-4">
          {PLACES.map((p) => {
            const here = path === p.href || p.also.some((a) => path === a || path.startsWith(`${a}/`));
            return (
              <li key={p.href}>
                <Link
                  href={p.href}
                  aria-current={here ? "page" : undefined}
                  className={`flex min-h-16 flex-col items-center justify-center text-sm font-bold ${here ? "text-accent" : "text-ink-soft"}`}
                >
                  <span aria-hidden className="text-xl leading-none">
                    {p.glyph}
                  </span>
                  {p.label}
                </Link>
              </li>
            );
          })}
        </ul>
      </nav>
    </div>
  );
}

/** Why the phone's copy is gone, and where the unsent work waits (lib/sync/phone-sync.ts wipeRevoked). */
function revokedText(r: { email: string; changes: number; photos: number }) {
  const who = r.email ? ` for ${r.email}` : "";
  const work = [
    r.changes && `${r.changes} change${r.changes === 1 ? "" : "s"}`,
    r.photos && `${r.photos} photo${r.photos === 1 ? "" : "s"}`,
  ]
    .filter(Boolean)
    .join(" and ");
  const kept = work
    ? ` ${work} made here and not yet sent ${r.changes + r.photos === 1 ? "is" : "are"} kept: sign in again${who} to send them.`
    : "";
  return `The session${who} was ended elsewhere (signed out everywhere, or a new password), so this phone's copy of its data was removed.${kept}`;
}

/** Sign in and come back here, query string included (/check?id=... must survive the round trip). */
function SignInHere({ path, query, hash = "" }: { path: string; query: string; hash?: string }) {
  // not prefetched: a visitor sent here loads the sign-in form's code only if they tap
  return (
    <ButtonLink
      href={`/sign-in?next=${encodeURIComponent(`${query ? `${path}?${query}` : path}${hash}`)}`}
      prefetch={false}
    >
      Sign in
    </ButtonLink>
  );
}

function onHashChange(then: () => void) {
  window.addEventListener("hashchange", then);
  return () => window.removeEventListener("hashchange", then);
}

function SignInWithQuery({ path }: { path: string }) {
  // a mail's link to #comments or #verdict keeps its fragment through sign-in (read after the first
  // render: the server never sees it)
  const hash = useSyncExternalStore(
    onHashChange,
    () => window.location.hash,
    () => "",
  );
  return <SignInHere path={path} query={useSearchParams().toString()} hash={hash} />;
}
