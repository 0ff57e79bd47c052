"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import Link from "next/link";
import { useEffect, useState, type FormEvent } from "react";
import { ApiFailure, fetchers, mutations, queryKeys, type ClubSummary } from "@/lib/api/client";
import { Button, Field, inputClass, Notice, SelectField } from "@/components/ui/controls";
import { PoolPanel } from "@/components/pool/pool-panel";
import { ROLES, type Role } from "@/lib/roles";

const ROLE_WORDS: Record<Role, string> = { mechanic: "Mechanic", mentor: "Mentor", admin: "Admin" };

function Members({ club }: { club: ClubSummary }) {
  const qc = useQueryClient();
  const members = useQuery({ queryKey: queryKeys.members(club.id), queryFn: () => fetchers.members(club.id) });
  const [error, setError] = useState<string | null>(null);
  const setRoles = useMutation({
    mutationFn: (v: { userId: string; roles: Role[] }) => mutations.setRoles(club.id, v.userId, v.roles),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.members(club.id) }),
    onError: (e) => setError(e.message),
  });
  const isAdmin = club.roles.includes("admin");
  if (!members.data) return null;
  return (
    <section aria-label={`Members of ${club.name}`} className="flex flex-col gap-2">
      <h3 className="text-lg font-bold">Members</h3>
      {error && <Notice tone="error">{error}</Notice>}
      <ul className="flex flex-col gap-2">
        {members.data.map((m) => (
          <li key={m.userId} className="rounded-xl border border-line p-3">
            <p className="font-bold">{m.name}</p>
            {isAdmin ? (
              <fieldset className="mt-2 flex flex-wrap gap-2">
                <legend className="sr-only">Roles of {m.name}</legend>
                {ROLES.map((r) => {
                  const on = m.roles.includes(r);
                  return (
                    <button
                      key={r}
                      type="button"
                      aria-pressed={on}
                      onClick={() =>
                        setRoles.mutate({
                          userId: m.userId,
                          roles: on ? m.roles.filter((x) => x !== r) : [...m.roles, r],
                        })
                      }
                      className={`min-h-12 rounded-xl border-2 px-3 font-bold ${on ? "border-accent text-ink" : "border-line text-ink-soft"}`}
                    >
                      {on ? "✓ " : ""}
                      {ROLE_WORDS[r]}
                    </button>
                  );
                })}
              </fieldset>
            ) : (
              <p className="text-ink-soft">{m.roles.map((r) => ROLE_WORDS[r]).join(", ")}</p>
            )}
          </li>
        ))}
      </ul>
    </section>
  );
}

function InviteForm({ club }: { club: ClubSummary }) {
  const [email, setEmail] = useState("");
  const [role, setRole] = useState<Role>("mechanic");
  const [note, setNote] = useState<{ tone: "ok" | "error"; text: string } | null>(null);
  const submit = async (e: FormEvent) => {
    e.preventDefault();
    try {
      await mutations.invite(club.id, email, role);
      setNote({ tone: "ok", text: `Invitation sent to ${email}.` });
      setEmail("");
    } catch (err) {
      setNote({
        tone: "error",
        text: err instanceof ApiFailure ? (err.fields.email ?? err.message) : "Could not send the invitation",
      });
    }
  };
  return (
    <form onSubmit={submit} className="flex flex-col gap-3" aria-label={`Invite to ${club.name}`}>
      <h3 className="text-lg font-bold">Invite someone</h3>
      {note && <Notice tone={note.tone}>{note.text}</Notice>}
      <Field id={`invite-${club.id}`} label="Their e-mail">
        <input
          id={`invite-${club.id}`}
          type="email"
          value={email}
          onChange={(e) => setEmail(e.target.value)}
          className={inputClass}
        />
      </Field>
      <SelectField
        id={`role-${club.id}`}
        label="As"
        options={ROLES}
        words={ROLE_WORDS}
        value={role}
        onChange={(e) => setRole(e.target.value as Role)}
      />
      <Button type="submit" look="plain">
        Send invitation
      </Button>
    </form>
  );
}

function Queue({ club }: { club: ClubSummary }) {
  const qc = useQueryClient();
  // asked again on every visit: the kept copy (for offline) shows until the answer comes
  const queue = useQuery({
    queryKey: queryKeys.queue(club.id),
    queryFn: () => fetchers.queue(club.id),
    refetchOnMount: "always",
  });
  // fetch each waiting check now, while there is a signal: it is kept for reading offline
  useEffect(() => {
    for (const q of queue.data ?? []) {
      const id = q.checkId;
      void qc.prefetchQuery({ queryKey: queryKeys.check(id), queryFn: () => fetchers.check(id) });
      void qc.prefetchQuery({ queryKey: queryKeys.readings(id), queryFn: () => fetchers.readings(id) });
      void qc.prefetchQuery({ queryKey: queryKeys.comments(id), queryFn: () => fetchers.comments(id) });
      void qc.prefetchQuery({ queryKey: queryKeys.shares(id), queryFn: () => fetchers.shares(id) });
      void qc.prefetchQuery({ queryKey: queryKeys.photos(id), queryFn: () => fetchers.photos(id) });
    }
  }, [qc, queue.data]);
  if (!queue.data) return null;
  return (
    <section className="flex flex-col gap-2" aria-label={`Waiting for review in ${club.name}`}>
      <h3 className="text-lg font-bold">Waiting for review</h3>
      {queue.data.length === 0 && <p className="text-ink-soft">Nothing shared with the club right now.</p>}
      <ul className="flex flex-col gap-2">
        {queue.data.map((q) => (
          <li key={q.shareId}>
            <Link href={`/review?id=${q.checkId}`} className="block rounded-xl border border-line p-3">
              <p className="font-bold">{q.engineName}</p>
              <p className="text-ink-soft">
                {q.ownerName} · <span className="figures">{q.odometer.toLocaleString("en")}</span> {q.odometerUnit} ·{" "}
                {q.verdict ? "reviewed" : "no verdict yet"}
              </p>
            </Link>
          </li>
        ))}
      </ul>
    </section>
  );
}

export function ClubPanel() {
  const qc = useQueryClient();
  const clubs = useQuery({ queryKey: queryKeys.clubs(), queryFn: fetchers.clubs });
  const [name, setName] = useState("");
  const create = useMutation({
    mutationFn: () => mutations.createClub(name),
    onSuccess: () => (setName(""), qc.invalidateQueries({ queryKey: queryKeys.clubs() })),
  });
  if (clubs.isPending) return <p className="text-ink-soft">Loading your clubs…</p>;
  if (clubs.isError) return <Notice tone="error">{clubs.error.message}</Notice>;
  return (
    <div className="flex flex-col gap-6">
      {clubs.data.map((c) => (
        <article key={c.id} className="flex flex-col gap-4 rounded-2xl border border-line bg-surface p-4">
          <header>
            <h2 className="text-2xl font-extrabold">{c.name}</h2>
            <p className="text-ink-soft">You are: {c.roles.map((r) => ROLE_WORDS[r]).join(", ")}</p>
          </header>
          {c.roles.includes("mentor") && <Queue club={c} />}
          <PoolPanel club={c} />
          <Members club={c} />
          {c.roles.includes("admin") && <InviteForm club={c} />}
        </article>
      ))}
      <form
        onSubmit={(e) => {
          e.preventDefault();
          create.mutate();
        }}
        className="flex flex-col gap-3 rounded-2xl border border-dashed border-line p-4"
      >
        <h2 className="text-xl font-bold">Start a club</h2>
        {create.error && (
          <Notice tone="error">
            {create.error instanceof ApiFailure
              ? (create.error.fields.name ?? create.error.message)
              : "Could not create the club"}
          </Notice>
        )}
        <Field id="club-name" label="Club name" hint="You become its admin and can invite members.">
          <input id="club-name" value={name} onChange={(e) => setName(e.target.value)} className={inputClass} />
        </Field>
        <Button type="submit" look="plain" disabled={create.isPending}>
          Create club
        </Button>
      </form>
    </div>
  );
}
