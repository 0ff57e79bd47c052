"use client";

import { useQuery, useQueryClient } from "@tanstack/react-query";
import { useLiveQuery } from "@/components/sync/use-live-query";
import { useSearchParams } from "next/navigation";
import Link from "next/link";
import { useEffect, useMemo, useRef, useState } from "react";
import { valveRounds } from "@/lib/check/rounds";
import { camsOut, camsOutWords } from "@/lib/lash";
import { shimPositionWords } from "@/lib/check/shim-position";
import { checkPlan, valveViews } from "@/lib/check/derive";
import { VERDICTS, type Verdict } from "@/lib/check/verdicts";
import { fetchers, queryKeys } from "@/lib/api/client";
import { addComment, giveVerdict } from "@/lib/sync/later";
import { queuePhoto } from "@/lib/sync/later";
import { shrinkPhoto } from "@/lib/photos/shrink";
import type { MutationArgs } from "@/lib/sync/mutations";
import { useLocalCore } from "@/components/sync/local-provider";
import { PhotoStrip } from "@/components/photos/photo-strip";
import { EngineDiagram } from "@/components/check/engine-diagram";
import { PlanTable } from "@/components/check/plan-table";
import { Notice, TitledSection } from "@/components/ui/controls";
import { CommentForm, CommentItem, CommentThread, type ThreadComment } from "./comment-thread";
import { FORMER_MEMBER } from "@/lib/account/deletion";
import { facingOf } from "@/lib/check/diagram";

/** One valve's rounds (first readings and each re-check): the same list in the valve's panel and the full list. */
function RoundList({
  rounds,
  measured,
  className,
  label,
}: {
  rounds: ReturnType<typeof valveRounds>;
  measured: boolean;
  className: string;
  label?: string;
}) {
  return (
    <ol className={className} aria-label={label}>
      {rounds.map((r) => (
        <li key={r.round} className="flex flex-wrap justify-between gap-x-2">
          <span className="text-ink-soft">{r.title}</span>
          <span className="text-right">{r.text}</span>
        </li>
      ))}
      {!measured && <li className="text-ink-soft">not measured</li>}
    </ol>
  );
}

/**
 * A mentor's view of a shared check: read-only readings with how each was found, the diagram, the
 * plan, photos, the comments, and the verdict. Nothing here can change a reading. What was read
 * with a signal stays readable without one (components/sync/persist-queries); comments, photos and
 * verdicts go into the phone's outbox and are sent on the next sync, so both sides work offline.
 */
export function ReviewScreen() {
  const id = useSearchParams().get("id") ?? "";
  const qc = useQueryClient();
  const check = useQuery({ queryKey: queryKeys.check(id), queryFn: () => fetchers.check(id), retry: false });
  const readings = useQuery({
    queryKey: queryKeys.readings(id),
    queryFn: () => fetchers.readings(id),
    enabled: check.isSuccess,
  });
  // the other side may have written since the kept copy was saved: ask again on every visit
  const comments = useQuery({
    queryKey: queryKeys.comments(id),
    queryFn: () => fetchers.comments(id),
    enabled: check.isSuccess,
    refetchOnMount: "always",
  });
  const shares = useQuery({
    queryKey: queryKeys.shares(id),
    queryFn: () => fetchers.shares(id),
    enabled: check.isSuccess,
    refetchOnMount: "always",
  });
  const engine = check.data?.engine;
  const views = useMemo(
    () => (engine && readings.data ? valveViews(engine, readings.data, () => null) : null),
    [engine, readings.data],
  );
  const plan = useMemo(() => {
    try {
      return engine && views ? checkPlan(engine, views, []) : null;
    } catch {
      return null;
    }
  }, [engine, views]);
  const { db, user, syncNow, needDb } = useLocalCore();
  // opened with a signal, the review reads only the server; without one, this phone's own comments
  // and verdict waiting to be sent come from the local database, which then loads
  useEffect(() => {
    if (user && !navigator.onLine) void needDb();
  }, [user, needDb]);
  // the valve tapped on the diagram: its readings, its comments and a box to comment on it
  const [picked, setPicked] = useState<string | null>(null);
  const [pickN, setPickN] = useState(0);
  const panelHeading = useRef<HTMLHeadingElement>(null);
  useEffect(() => {
    if (pickN === 0) return;
    const h = panelHeading.current;
    if (!h) return;
    h.scrollIntoView({ block: "start" });
    h.focus({ preventScroll: true });
  }, [pickN]);
  const local = useLiveQuery(async () => (db ? db.comments.where("checkId").equals(id).toArray() : []), [db, id], []);
  const outbox = useLiveQuery(async () => (db ? db.outbox.toArray() : []), [db], []);
  const pendingIds = new Set(
    outbox.filter((m) => m.name === "comment.add/1").map((m) => (m.args as { id: string }).id),
  );
  const pendingVerdict = outbox
    .filter((m) => m.name === "verdict.set/1")
    .map((m) => m.args as MutationArgs<"verdict.set/1">)
    .at(-1);
  const refresh = async () => {
    await syncNow();
    await Promise.all([
      qc.invalidateQueries({ queryKey: queryKeys.comments(id) }),
      qc.invalidateQueries({ queryKey: queryKeys.shares(id) }),
      qc.invalidateQueries({ queryKey: queryKeys.photos(id) }),
    ]);
  };
  const onComment = async (body: string, valve: string | null, photo: File | null) => {
    if (!user) throw new Error("Sign in on this phone first");
    const db = await needDb();
    const commentId = crypto.randomUUID();
    await addComment(db, { id: commentId, checkId: id, authorId: user.id, body, valve });
    if (photo) await queuePhoto(db, { checkId: id, commentId, blob: await shrinkPhoto(photo) });
    void refresh();
  };
  const onVerdict = async (shareId: string, v: Verdict) => {
    if (!user) return;
    await giveVerdict(await needDb(), shareId, v);
    void refresh();
  };

  // A mail's link ends in #comments, #verdict or #comment-<id>: that part is drawn only once the
  // check and its comments are here, so the browser's own jump finds nothing. Land there once the
  // answer after this visit is in (or failed, offline: the kept copy is then shown).
  const landed = useRef(false);
  const commentsIn = comments.isFetchedAfterMount || comments.isError;
  const sharesIn = shares.isFetchedAfterMount || shares.isError;
  const drawn = !!views;
  useEffect(() => {
    const land = () => {
      const hash = decodeURIComponent(window.location.hash.slice(1));
      if (!hash) return true;
      if (hash === "verdict" ? !sharesIn : !commentsIn) return false;
      let el: HTMLElement | null;
      if (hash === "comments") {
        // the newest comment by someone else is the one the mail was about
        const theirs = [...document.querySelectorAll<HTMLElement>("#comments li[id^='comment-']")].filter(
          (li) => li.dataset.mine !== "true",
        );
        el = theirs.at(-1) ?? document.getElementById("comments");
      } else el = document.getElementById(hash);
      if (el) {
        el.scrollIntoView({ block: "start" });
        el.focus({ preventScroll: true });
      }
      return true;
    };
    if (!drawn) return;
    if (!landed.current) landed.current = land();
    // a link to another part of this page (a second mail opened in the same tab)
    const again = () => void land();
    window.addEventListener("hashchange", again);
    return () => window.removeEventListener("hashchange", again);
  }, [drawn, commentsIn, sharesIn]);

  if (check.isPending) return <p className="text-ink-soft">Loading the check…</p>;
  if (check.isError)
    return (
      <Notice tone="error">
        {check.error.message}. Open the check once with a signal to keep it for reading offline.
      </Notice>
    );
  if (!engine || !views) return null;
  const share = shares.data?.find((s) => !s.withdrawnAt);
  const unit = engine.displayUnit;
  const allReadings = readings.data ?? [];
  const serverComments = comments.data ?? [];
  const known = new Set(serverComments.map((c) => c.id));
  const thread: ThreadComment[] = [
    ...serverComments.map((c) => ({ ...c, pending: pendingIds.has(c.id) })),
    ...local
      .filter((c) => !known.has(c.id))
      .map((c) => ({
        id: c.id,
        checkId: c.checkId,
        valve: c.valve,
        body: c.body,
        authorId: c.authorId,
        authorName: c.authorId === user?.id ? user.name : c.authorId === null ? FORMER_MEMBER : "club member",
        createdAt: String(c.createdAt),
        pending: pendingIds.has(c.id),
      })),
  ].sort((a, b) => new Date(a.createdAt).getTime() - new Date(b.createdAt).getTime());
  const dots = new Set(thread.map((c) => c.valve).filter((v): v is string => !!v));
  const pickedView = picked ? views.find((v) => v.valve.id === picked) : undefined;
  const pickedComments = thread.filter((c) => c.valve === picked);
  const shownVerdict = pendingVerdict && pendingVerdict.shareId === share?.id ? pendingVerdict.verdict : share?.verdict;
  const isMentor = check.data.access === "mentor";
  return (
    <div className="flex flex-col gap-5">
      <p className="figures text-ink-soft">
        {engine.name} · {check.data.check.odometer.toLocaleString("en")} {engine.odometerUnit} ·{" "}
        {isMentor ? "read-only: you are reviewing" : "your check"}
      </p>
      {/* how the shims are reached: under the buckets, the mentor sees which cams come out */}
      <p className="font-bold" data-testid="review-shim-position">
        {shimPositionWords(engine.shimPosition)}
        {engine.shimPosition === "under" && plan
          ? ` · ${camsOutWords(camsOut({ shimPosition: "under", valves: plan.assignments.filter((a) => a.source.kind !== "keep").map((a) => a.valveId) }))}`
          : ""}
      </p>
      {!isMentor && (
        <Link
          href={`/check?id=${id}`}
          className="inline-flex min-h-12 items-center justify-center self-start rounded-xl border-2 border-line px-5 text-lg font-bold"
        >
          Open the check to work on it
        </Link>
      )}
      <p className="text-sm text-ink-soft">
        Tap a valve for its readings and comments{isMentor ? ", and to comment on it" : ""}.
      </p>
      <EngineDiagram
        views={views}
        facing={facingOf(engine)}
        commentDots={dots}
        current={picked ?? undefined}
        onPick={(v) => {
          setPicked(v);
          setPickN((n) => n + 1);
        }}
      />
      {picked && pickedView && (
        <section
          aria-labelledby="valve-panel-title"
          data-testid="valve-panel"
          className="flex scroll-mt-4 flex-col gap-3 rounded-2xl border-2 border-accent bg-surface p-3"
        >
          <div className="flex flex-wrap items-center justify-between gap-2">
            <h2 id="valve-panel-title" ref={panelHeading} tabIndex={-1} className="figures text-xl font-extrabold">
              Valve {picked}
            </h2>
            <button
              type="button"
              onClick={() => setPicked(null)}
              className="min-h-12 rounded-xl border-2 border-line px-4 font-bold"
            >
              Close
            </button>
          </div>
          <RoundList
            rounds={valveRounds(allReadings, picked, unit)}
            measured={pickedView.latest != null}
            className="figures flex flex-col gap-0.5"
            label={`Readings of ${picked}`}
          />
          <PhotoStrip checkId={id} valve={picked} canAdd={false} label={`valve ${picked}`} />
          <h3 className="font-extrabold">Comments on {picked}</h3>
          {pickedComments.length === 0 ? (
            <p className="text-ink-soft">None yet.</p>
          ) : (
            <ol className="flex flex-col gap-2" aria-label={`Comments on ${picked}`}>
              {pickedComments.map((c) => (
                <CommentItem key={c.id} c={c} />
              ))}
            </ol>
          )}
          <CommentForm key={picked} idPrefix="valve-comment" valve={picked} onAdd={onComment} />
        </section>
      )}
      <section aria-labelledby="readings-title" className="flex flex-col gap-2">
        <h2 id="readings-title" className="text-xl font-extrabold">
          Readings and how they were found
        </h2>
        <ul className="figures flex flex-col gap-1 text-base">
          {views.map((v) => (
            <li
              key={v.valve.id}
              className="flex flex-col gap-1 border-b border-line py-1"
              data-testid={`rounds-${v.valve.id}`}
            >
              <strong>{v.valve.id}</strong>
              {/* every round, the first readings and each re-check, so the reviewer reads the whole story */}
              <RoundList
                rounds={valveRounds(allReadings, v.valve.id, unit)}
                measured={v.latest != null}
                className="flex flex-col gap-0.5"
              />
              <PhotoStrip checkId={id} valve={v.valve.id} canAdd={false} label={`valve ${v.valve.id}`} />
            </li>
          ))}
        </ul>
      </section>
      <TitledSection
        titleId="photos-title"
        title="Photos of the whole check"
        titleClass="text-xl font-extrabold"
        className="flex flex-col gap-2"
      >
        <PhotoStrip checkId={id} valve={null} canAdd label="the whole check" />
      </TitledSection>
      {plan && <PlanTable engine={engine} plan={plan} byId={new Map(views.map((v) => [v.valve.id, v]))} />}
      <section
        id="verdict"
        tabIndex={-1}
        aria-labelledby="verdict-title"
        className="flex scroll-mt-4 flex-col gap-2 rounded-2xl border-2 border-accent p-4"
      >
        <h2 id="verdict-title" className="text-xl font-extrabold">
          Verdict
        </h2>
        <p data-testid="verdict">
          {shownVerdict ? `${VERDICTS[shownVerdict].glyph} ${VERDICTS[shownVerdict].word}` : "No verdict yet."}
          {pendingVerdict && pendingVerdict.shareId === share?.id && (
            <span className="block text-sm font-bold text-ink-soft">waiting to send</span>
          )}
        </p>
        {isMentor && share && (
          <div className="flex flex-col gap-2">
            {(Object.keys(VERDICTS) as Verdict[]).map((k) => (
              <button
                key={k}
                type="button"
                aria-pressed={shownVerdict === k}
                onClick={() => void onVerdict(share.id, k)}
                className={`min-h-14 rounded-xl border-2 px-4 text-left text-lg font-bold ${shownVerdict === k ? "border-accent bg-accent text-accent-ink" : "border-line"}`}
              >
                {VERDICTS[k].glyph} {VERDICTS[k].word}
              </button>
            ))}
          </div>
        )}
      </section>
      <CommentThread
        me={user?.id}
        comments={thread}
        valves={views.map((v) => v.valve.id)}
        onAdd={onComment}
        photosOf={(cid) => <PhotoStrip checkId={id} valve={null} commentId={cid} canAdd={false} label="this comment" />}
      />
    </div>
  );
}
