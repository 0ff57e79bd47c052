"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import Link from "next/link";
import { VERDICTS } from "@/lib/check/verdicts";
import { fetchers, mutations, queryKeys } from "@/lib/api/client";
import { useLocal } from "@/components/sync/local-provider";
import { Button, Notice } from "@/components/ui/controls";

/** The mechanic asks a club to look the check over, sees the verdict, and can withdraw the share. */
export function AskReview({ checkId }: { checkId: string }) {
  const qc = useQueryClient();
  const { syncNow, waiting } = useLocal();
  const clubs = useQuery({ queryKey: queryKeys.clubs(), queryFn: fetchers.clubs, retry: false });
  const shares = useQuery({
    queryKey: queryKeys.shares(checkId),
    queryFn: () => fetchers.shares(checkId),
    retry: false,
    refetchOnMount: "always",
  });
  const share = useMutation({
    mutationFn: async (clubId: string) => {
      // the server must hold the check and its readings before a mentor can read them
      if (waiting > 0) await syncNow();
      return mutations.share(checkId, clubId);
    },
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.shares(checkId) }),
  });
  const withdraw = useMutation({
    mutationFn: (id: string) => mutations.withdraw(id),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.shares(checkId) }),
  });
  if (clubs.isError) return <Notice>Asking the club for a review needs a signal.</Notice>;
  if (!clubs.data) return null;
  if (clubs.data.length === 0) return null;
  const active = (shares.data ?? []).filter((s) => !s.withdrawnAt);
  return (
    <section
      aria-labelledby="review-title"
      className="flex flex-col gap-2 rounded-2xl border border-line bg-surface p-4 print:hidden"
    >
      <h2 id="review-title" className="text-xl font-extrabold">
        Club review
      </h2>
      {active.map((s) => (
        <div key={s.id} className="flex flex-col gap-2">
          <p>
            Shared with <strong>{clubs.data.find((c) => c.id === s.clubId)?.name ?? "a club"}</strong>:{" "}
            {s.verdict ? (
              <strong>{`${VERDICTS[s.verdict].glyph} ${VERDICTS[s.verdict].word}`}</strong>
            ) : (
              "waiting for a mentor"
            )}
          </p>
          <div className="flex flex-wrap gap-2">
            <Link
              href={`/review?id=${checkId}`}
              className="inline-flex min-h-12 items-center justify-center rounded-xl border-2 border-line px-5 text-lg font-bold"
            >
              Comments and verdict
            </Link>
            <Button type="button" look="quiet" onClick={() => withdraw.mutate(s.id)}>
              Withdraw
            </Button>
          </div>
        </div>
      ))}
      {clubs.data
        .filter((c) => !active.some((s) => s.clubId === c.id))
        .map((c) => (
          <Button key={c.id} type="button" look="plain" disabled={share.isPending} onClick={() => share.mutate(c.id)}>
            Ask {c.name} to review
          </Button>
        ))}
      {share.error && <Notice tone="error">{share.error.message}</Notice>}
    </section>
  );
}
