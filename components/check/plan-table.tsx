"use client";

import { useMemo } from "react";
import { createColumnHelper, flexRender, getCoreRowModel, useReactTable } from "@tanstack/react-table";
import { formatLength, shimNumber, type Assignment, type ShimPlan } from "@/lib/lash";
import { sourceWords, type ValveView } from "@/lib/check/derive";
import type { LocalEngine } from "@/lib/sync/local-db";

interface Row {
  a: Assignment;
  v: ValveView;
}

const col = createColumnHelper<Row>();

/** A shim size as its series names it: 2.525 from a 0.025 mm series stays 2.525, never 2.53. */
const shimText = (mm: number) => shimNumber(mm);
/** The shim in the bucket now: a micrometer reading to 0.001 mm, a stamp as it is marked. */
const nowText = (v: ValveView | undefined) =>
  v?.installed != null ? shimNumber(v.installed, v.latest?.installedMicrometer != null) : "—";

/** The valve column stays put while the rest scrolls sideways, so "Gives" is never read without its valve. */
// The box has no left padding (scrolled cells would show through it): the pinned cells carry it.
const PINNED = "sticky left-0 z-10 bg-bg pl-4";

/**
 * Only the valves that change, one line each ("I3.1: 2.50 to 2.60, buy"): what a phone at the bench
 * needs without scrolling a wide table sideways.
 */
export function PlanChanges({
  plan,
  byId,
  lenders,
}: {
  plan: ShimPlan;
  byId: Map<string, ValveView>;
  lenders?: Map<string, string>;
}) {
  const changed = plan.assignments.filter((a) => a.source.kind !== "keep");
  if (changed.length === 0) return <p className="font-bold text-ok">✓ Every valve keeps its shim.</p>;
  return (
    <section aria-labelledby="changes-title" className="flex flex-col gap-1">
      <h3 id="changes-title" className="text-xl font-extrabold">
        What changes ({changed.length} of {plan.assignments.length} valves)
      </h3>
      <ul className="figures text-lg" data-testid="plan-changes">
        {changed.map((a) => {
          const v = byId.get(a.valveId);
          const now = nowText(v);
          return (
            <li key={a.valveId}>
              <strong>{a.valveId}</strong>: {now} to <strong>{shimText(a.size)}</strong>,{" "}
              {sourceWords(a.source, lenders)}
            </li>
          );
        })}
      </ul>
    </section>
  );
}

/** The plan per valve: shim now, clearance, target, new shim, predicted clearance, and its source. */
export function PlanTable({
  engine,
  plan,
  byId,
  lenders,
}: {
  engine: LocalEngine;
  plan: ShimPlan;
  byId: Map<string, ValveView>;
  lenders?: Map<string, string>;
}) {
  const unit = engine.displayUnit;
  const columns = [
    col.accessor((r) => r.a.valveId, { id: "valve", header: "Valve", cell: (c) => <strong>{c.getValue()}</strong> }),
    col.accessor((r) => r.v.installed, { id: "now", header: "Shim now", cell: (c) => nowText(c.row.original.v) }),
    col.accessor((r) => r.v.measured, {
      id: "clearance",
      header: "Clearance",
      cell: (c) => (c.getValue() != null ? formatLength(c.getValue()!, unit) : "—"),
    }),
    col.accessor((r) => r.v.spec.target ?? (r.v.spec.min + r.v.spec.max) / 2, {
      id: "target",
      header: "Target",
      cell: (c) => formatLength(c.getValue(), unit),
    }),
    col.accessor((r) => r.a, {
      id: "new",
      header: "New shim",
      cell: (c) => <strong>{c.getValue().source.kind === "keep" ? "—" : shimText(c.getValue().size)}</strong>,
    }),
    col.accessor((r) => r.a, {
      id: "gives",
      header: "Gives",
      cell: (c) => `${formatLength(c.getValue().predicted, unit)} ${c.getValue().inSpec ? "✓" : "✕ out of band"}`,
    }),
    col.accessor((r) => r.a.source, {
      id: "from",
      header: "From",
      cell: (c) => sourceWords(c.getValue(), lenders),
    }),
  ];
  const data = useMemo(() => plan.assignments.map((a) => ({ a, v: byId.get(a.valveId)! })), [plan, byId]);
  // autoResetAll off: the table is never paged or expanded, and its reset-on-new-data would set
  // state on every render of the plan (each render hands it new rows), a render loop
  // eslint-disable-next-line react-hooks/incompatible-library -- TanStack Table returns fresh functions each render; the compiler skips this component
  const table = useReactTable({ data, columns, getCoreRowModel: getCoreRowModel(), autoResetAll: false });
  return (
    // a region that scrolls sideways on a phone is a Tab stop, so the arrow keys reach "Gives" and
    // "From" (WCAG 2.1.1); the padding keeps its focus ring inside the scroll box
    <div role="region" aria-labelledby="plan-table-caption" tabIndex={0} className="-mx-4 overflow-x-auto py-1.5 pr-4">
      <table className="figures w-full min-w-[34rem] border-collapse text-left text-base">
        <caption id="plan-table-caption" className="mb-2 pl-4 text-left text-xl font-extrabold">
          Plan per valve <span className="text-sm font-bold text-ink-soft sm:hidden">(scrolls sideways)</span>
        </caption>
        <thead>
          {table.getHeaderGroups().map((hg) => (
            <tr key={hg.id} className="border-b-2 border-line text-sm text-ink-soft">
              {hg.headers.map((h) => (
                <th key={h.id} scope="col" className={`py-2 pr-2 ${h.column.id === "valve" ? PINNED : ""}`}>
                  {flexRender(h.column.columnDef.header, h.getContext())}
                </th>
              ))}
            </tr>
          ))}
        </thead>
        <tbody>
          {table.getRowModel().rows.map((row) => (
            <tr key={row.id} className="border-b border-line" data-testid={`plan-${row.original.a.valveId}`}>
              {row.getVisibleCells().map((c) => (
                <td key={c.id} className={`py-2 pr-2 ${c.column.id === "valve" ? PINNED : ""}`}>
                  {flexRender(c.column.columnDef.cell, c.getContext())}
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
