"use client";

import { createPortal } from "react-dom";
import { camsOut, camsOutWords, lengthNumber, shimNumber, type ShimPlan, type SizeCount } from "@/lib/lash";
import { drawingOrder, facingOf } from "@/lib/check/diagram";
import { STATE_WORDS, sourceWords, type ValveView } from "@/lib/check/derive";
import { prepareCautions, shimPositionWords, UNDER_BUCKET_FIT } from "@/lib/check/shim-position";
import type { LocalCheck, LocalEngine } from "@/lib/sync/local-db";

/**
 * The printed worksheet: one sheet of A4 or Letter for up to 24 valves, to take to the bench. It is
 * mounted straight under <body> and is the only thing the print style shows (app/globals.css), so
 * no button, step tab or navigation reaches the paper. Blank columns take the re-measures by hand.
 */
export default function Worksheet({
  engine,
  check,
  views,
  plan,
  lenders,
}: {
  engine: LocalEngine;
  check: LocalCheck;
  views: ValveView[];
  plan: ShimPlan | null;
  lenders?: Map<string, string>;
}) {
  const unit = engine.displayUnit;
  const fine =
    "step" in engine.shims ? engine.shims.step < 0.05 : engine.shims.sizes.some((s) => Math.round(s * 1000) % 10 !== 0);
  // each value as it was entered or measured (lib/lash/units.ts): a typed 0.075 stays 0.075
  const shim = (s: number | null | undefined, micrometer = false) =>
    s == null ? "" : shimNumber(s, fine || micrometer);
  const len = (x: number | null | undefined) => (x == null ? "" : lengthNumber(x, unit));
  const byValve = new Map(plan?.assignments.map((a) => [a.valveId, a]) ?? []);
  // the phone's and the review's drawing order, so a shim read off the paper goes into the bucket the phone showed
  const drawn = drawingOrder(views, facingOf(engine));
  const sideName = (k: "intake" | "exhaust") => (k === "intake" ? "Intake side" : "Exhaust side");
  const band = (s: ValveView["spec"]) =>
    `${len(s.min)}–${len(s.max)}${s.target != null ? ` (target ${len(s.target)})` : ""}`;
  const series =
    "step" in engine.shims
      ? `${shim(engine.shims.min)} to ${shim(engine.shims.max)} mm in ${engine.shims.step} mm steps`
      : `${engine.shims.sizes.length} sizes, ${shim(Math.min(...engine.shims.sizes))} to ${shim(Math.max(...engine.shims.sizes))} mm`;
  const date = new Date(check.startedAt).toLocaleDateString("en-GB", {
    day: "numeric",
    month: "short",
    year: "numeric",
  });
  const cell = (v: ValveView) => {
    const a = byValve.get(v.valve.id);
    const s = STATE_WORDS[v.state];
    return (
      <div key={v.valve.id} className={`ws-cell ws-${v.state}`} data-valve={v.valve.id}>
        <b>{v.valve.id}</b>
        <span>{v.measured != null ? len(v.measured) : "—"}</span>
        <span>
          {s.glyph} {s.word}
        </span>
        <span>{a && a.source.kind !== "keep" ? `→ ${shim(a.size)}` : " "}</span>
      </div>
    );
  };
  /** one row of valves across the cylinders, as the diagram above draws it */
  const row = (side: "top" | "bottom") => (
    <div className="ws-row" data-row={side}>
      {drawn.cylinders.map((g) => (
        <div key={g.cylinder} className="ws-cyl" data-cylinder={g.cylinder}>
          {g[side].map(cell)}
        </div>
      ))}
    </div>
  );
  const list = (xs: SizeCount[]) => xs.map((x) => `${x.count} × ${shim(x.size)}`).join(", ");
  const position = engine.shimPosition;
  const changing = plan?.assignments.filter((a) => a.source.kind !== "keep").map((a) => a.valveId) ?? [];
  // the cams to take out, before anyone starts (an under-bucket engine); over the bucket they stay in
  const cams =
    position === "under"
      ? camsOutWords(camsOut({ shimPosition: "under", valves: changing }))
      : position === "over"
        ? "Cams stay in: each shim comes out over its bucket with the bucket tool."
        : "Say in the engine's profile where the shims sit before fitting.";
  const borrow = plan?.borrow
    .map((b) => `${b.count} × ${shim(b.size)} from ${lenders?.get(b.ownerId) ?? "a club member"}`)
    .join(", ");
  return createPortal(
    <article className="worksheet" aria-label="Printed worksheet">
      <header className="ws-head">
        <div>
          <p className="ws-kicker">Valve clearance worksheet</p>
          <h1>{engine.name}</h1>
        </div>
        <p>
          Check at {check.odometer.toLocaleString("en")} {engine.odometerUnit} · {date} · measured{" "}
          {check.measuredHot ? "hot" : "cold"}
          <br />
          Printed {new Date().toLocaleDateString("en-GB", { day: "numeric", month: "short", year: "numeric" })} from
          Lashwright
        </p>
      </header>
      <dl className="ws-facts">
        <div>
          <dt>Intake band ({unit})</dt>
          <dd>{band(engine.intake)}</dd>
        </div>
        <div>
          <dt>Exhaust band ({unit})</dt>
          <dd>{band(engine.exhaust)}</dd>
        </div>
        <div>
          <dt>Shim series</dt>
          <dd>
            {series}
            {engine.shimDiameter ? `, ⌀ ${engine.shimDiameter} mm` : ""}
          </dd>
        </div>
        <div>
          <dt>Firing order</dt>
          <dd>{engine.firingOrder.join("-")}</dd>
        </div>
      </dl>
      <p className="ws-position" data-testid="ws-position">
        {shimPositionWords(position)} · {cams}
      </p>
      <figure className="ws-diagram" aria-label="Engine diagram">
        <p>
          {sideName(drawn.top)} · {engine.mirrored ? "mirrored: cylinder 1 on the right" : "cylinder 1 on the left"}
        </p>
        {row("top")}
        <div className="ws-row ws-cyl-names">
          {drawn.cylinders.map((g) => (
            <span key={g.cylinder}>Cyl {g.cylinder}</span>
          ))}
        </div>
        {row("bottom")}
        <p>{sideName(drawn.bottom)}, nearest you</p>
      </figure>
      <table className="ws-table">
        <thead>
          <tr>
            <th>Valve</th>
            <th>Shim in (mm)</th>
            <th>Clearance ({unit})</th>
            <th>State</th>
            <th>New shim (mm)</th>
            <th>Comes from</th>
            <th>Gives ({unit})</th>
            <th className="ws-blank">Fitted</th>
            <th className="ws-blank">Re-measure</th>
            <th className="ws-blank">Again</th>
          </tr>
        </thead>
        <tbody>
          {views.map((v) => {
            const a = byValve.get(v.valve.id);
            const r = v.latest;
            const change = a && a.source.kind !== "keep";
            return (
              <tr key={v.valve.id} data-valve={v.valve.id}>
                <td>
                  <b>{v.valve.id}</b>
                </td>
                <td>{shim(v.installed, r?.installedMicrometer != null)}</td>
                <td>
                  {len(v.measured)}
                  {r?.feelerNoGo != null && v.measured != null ? (
                    <span className="ws-soft">–{len(r.feelerNoGo)}</span>
                  ) : null}
                </td>
                <td>
                  {STATE_WORDS[v.state].glyph} {STATE_WORDS[v.state].word}
                </td>
                <td>{change ? <b>{shim(a.size)}</b> : a ? "keep" : ""}</td>
                <td>{change ? sourceWords(a.source, lenders) : ""}</td>
                <td>{a ? `${len(a.predicted)}${a.inSpec ? "" : " ✕"}` : ""}</td>
                <td className="ws-blank">{change ? "☐" : ""}</td>
                <td className="ws-blank" />
                <td className="ws-blank" />
              </tr>
            );
          })}
        </tbody>
      </table>
      <p className="ws-soft ws-note">
        A clearance written a–b: the a blade slid, the b blade would not. ✕: the nearest size still leaves the valve out
        of its band.
      </p>
      <section className="ws-lists">
        <div>
          <h2>Buy</h2>
          <p>
            {!plan
              ? "Measure first."
              : plan.buy.length
                ? `${list(plan.buy)} mm`
                : "Nothing: swaps and the tray cover every change."}
          </p>
        </div>
        <div>
          <h2>Borrow</h2>
          <p>{borrow || "Nothing."}</p>
        </div>
        <div>
          <h2>Back to the tray</h2>
          <p>{plan?.toTray.length ? `${list(plan.toTray)} mm` : "Nothing."}</p>
        </div>
      </section>
      <section className="ws-cautions">
        <h2>Before you start</h2>
        <ul>
          {prepareCautions(position).map((c) => (
            <li key={c}>☐ {c}</li>
          ))}
        </ul>
        {position === "under" && (
          <>
            <h2>Fit with the cams out</h2>
            <ol className="ws-fit">
              {UNDER_BUCKET_FIT.map((t, n) => (
                <li key={t.key}>
                  ☐ {n + 1}. {t.task}.
                </li>
              ))}
            </ol>
          </>
        )}
        <p>
          Lashwright&apos;s numbers are a calculation aid, not a specification: the service manual and a qualified
          mechanic have the last word.
        </p>
      </section>
    </article>,
    document.body,
  );
}
