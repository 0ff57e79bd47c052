"use client";

import { useQuery } from "@tanstack/react-query";
import { signOut } from "next-auth/react";
import Link from "next/link";
import { usePathname } from "next/navigation";
import type { ReactNode } from "react";
import { ApiFailure, fetchers, queryKeys } from "@/lib/api/client";
import { ButtonLink, Notice } from "./controls";

const PLACES = [
  { href: "/engines", label: "Engines", glyph: "⚙" },
  { href: "/club", label: "Club", glyph: "☰" },
];

/** The signed-in frame: brand, who is signed in, and the places in a bottom bar within thumb reach. */
export function AppShell({ title, children }: { title: string; children: ReactNode }) {
  const path = usePathname();
  const me = useQuery({ queryKey: queryKeys.me(), queryFn: fetchers.me, retry: false });
  const signedOut = me.error instanceof ApiFailure && me.error.status === 401;
  return (
    <div className="mx-auto flex min-h-dvh max-w-xl flex-col">
      <header className="flex items-center justify-between gap-2 px-4 pt-4">
        <Link href="/engines" className="text-xl font-extrabold tracking-tight">
          Lash<span className="text-accent">wright</span>
        </Link>
        {me.data && (
          <button type="button" onClick={() => signOut({ callbackUrl: "/" })} className="inline-flex min-h-12 items-center rounded-xl px-3 text-sm font-bold text-ink-soft underline">
            Sign out {me.data.name.split(" ")[0]}
          </button>
        )}
      </header>
      <main className="flex flex-1 flex-col gap-5 px-4 pt-4 pb-28">
        <h1 className="text-3xl font-extrabold">{title}</h1>
        {signedOut ? (
          <div className="flex flex-col gap-3">
            <Notice>You are signed out.</Notice>
            <ButtonLink href={`/sign-in?next=${encodeURIComponent(path)}`}>Sign in</ButtonLink>
          </div>
        ) : (
          children
        )}
      </main>
      <nav aria-label="Places" className="fixed inset-x-0 bottom-0 border-t border-line bg-surface">
        <ul className="mx-auto grid max-w-xl grid-cols-2">
          {PLACES.map((p) => {
            const here = path.startsWith(p.href);
            return (
              <li key={p.href}>
                <Link href={p.href} aria-current={here ? "page" : undefined} className={`flex min-h-16 flex-col items-center justify-center text-sm font-bold ${here ? "text-accent" : "text-ink-soft"}`}>
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
