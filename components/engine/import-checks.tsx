"use client";

import { useId, useState } from "react";
import type { DateOrder, ImportPreview } from "@/lib/check/csv-import";
import type { LocalEngine } from "@/lib/sync/local-db";
import { importChecks } from "@/lib/sync/later";
import { useLocalCore } from "@/components/sync/local-provider";
import { Button, Notice } from "@/components/ui/controls";

const SHOWN_PROBLEMS = 100;

/**
 * Past checks from a CSV file (a spreadsheet or a typed-up paper log), so the history and drift
 * start from the mechanic's old records. The file is read and shown first; the checks are added only
 * when every row is sound, all in one local transaction through the outbox: a bad file adds nothing.
 * The reader (with its CSV parser) loads when a file is chosen, not with the page.
 */
export function ImportChecks({ engine }: { engine: LocalEngine }) {
  const { db, syncNow } = useLocalCore();
  const input = useId();
  const [file, setFile] = useState<{ name: string; text: string } | null>(null);
  const [dateOrder, setDateOrder] = useState<DateOrder | undefined>(undefined);
  const [preview, setPreview] = useState<ImportPreview | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [added, setAdded] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  const read = async (f: { name: string; text: string }, order: DateOrder | undefined) => {
    if (!db) return;
    const { readChecksCsv } = await import("@/lib/check/csv-import");
    const existing = (await db.checks.where("engineId").equals(engine.id).toArray()).map((c) => ({
      date: new Date(c.startedAt).toISOString().slice(0, 10),
      odometer: c.odometer,
    }));
    setPreview(readChecksCsv(f.text, engine, existing, { dateOrder: order }));
  };

  const choose = async (chosen: File | undefined) => {
    setAdded(null);
    setError(null);
    setPreview(null);
    setFile(null);
    if (!chosen) return;
    const { IMPORT_MAX_BYTES } = await import("@/lib/check/csv-import");
    if (chosen.size > IMPORT_MAX_BYTES)
      return setError(
        `${chosen.name} is ${(chosen.size / 1024 / 1024).toFixed(1)} MB; a file of past checks is at most ${IMPORT_MAX_BYTES / 1024 / 1024} MB. Split it.`,
      );
    const f = { name: chosen.name, text: await chosen.text() };
    setFile(f);
    await read(f, dateOrder);
  };

  const add = async () => {
    if (!db || !preview?.ok) return;
    setBusy(true);
    try {
      await importChecks(db, engine, preview.checks);
      const n = preview.checks.length;
      setAdded(
        `Added ${n} past check${n === 1 ? "" : "s"} (${preview.checks.reduce((s, c) => s + c.readings.length, 0)} readings) from ${file?.name}. They go to the server with the next sync.`,
      );
      setPreview(null);
      setFile(null);
      void syncNow();
    } catch (e) {
      setError(`Nothing was added: ${e instanceof Error ? e.message : "the checks could not be saved"}.`);
    } finally {
      setBusy(false);
    }
  };

  const bad = preview?.rows.filter((r) => r.errors.length) ?? [];
  const skipped = preview?.rows.filter((r) => r.skipped) ?? [];
  const readings = preview?.checks.reduce((s, c) => s + c.readings.length, 0) ?? 0;
  return (
    <section
      aria-labelledby="import-title"
      className="flex flex-col gap-3 rounded-2xl border border-line bg-surface p-4"
    >
      <h2 id="import-title" className="text-xl font-extrabold">
        Bring in past checks
      </h2>
      <p className="text-ink-soft">
        From a spreadsheet or a paper log typed up, saved as CSV. The first row names the columns:{" "}
        <span className="figures">date</span>, <span className="figures">odometer</span>,{" "}
        <span className="figures">valve</span> (like I1.1 or E4.2) and <span className="figures">clearance</span> or{" "}
        <span className="figures">go</span>; <span className="figures">shim</span>,{" "}
        <span className="figures">micrometer</span>, <span className="figures">no_go</span>,{" "}
        <span className="figures">new_shim</span> and <span className="figures">notes</span> are read too. Lengths are
        in {engine.displayUnit} unless a column name ends in _mm, _in or _thou. A CSV downloaded from a check reads back
        as it is.
      </p>
      <label htmlFor={input} className="font-bold">
        Choose a CSV file
      </label>
      <input
        id={input}
        type="file"
        accept=".csv,.txt,text/csv,text/plain"
        onChange={(e) => void choose(e.target.files?.[0])}
        className="min-h-12 rounded-xl border-2 border-line p-2 text-base file:mr-3 file:min-h-10 file:rounded-lg file:border-0 file:bg-surface-2 file:px-3 file:font-bold file:text-ink"
      />
      {error && <Notice tone="error">{error}</Notice>}
      {added && <Notice tone="ok">{added}</Notice>}
      {preview && (
        <div className="flex flex-col gap-3" data-testid="import-preview">
          {preview.fileErrors.map((e) => (
            <Notice key={e} tone="error">
              {e}
            </Notice>
          ))}
          {preview.warnings.map((w) => (
            <Notice key={w}>{w}</Notice>
          ))}
          {preview.dateOrderOpen && (
            <fieldset className="flex flex-col gap-1 rounded-xl border border-line p-3">
              <legend className="px-1 font-bold">Dates like 03/04/2024 in this file mean</legend>
              {(["dmy", "mdy"] as const).map((o) => (
                <label key={o} className="flex min-h-12 items-center gap-3">
                  <input
                    type="radio"
                    name={`${input}-order`}
                    className="h-6 w-6"
                    checked={preview.dateOrder === o}
                    onChange={() => {
                      setDateOrder(o);
                      if (file) void read(file, o);
                    }}
                  />
                  {o === "dmy" ? "3 April 2024 (day first)" : "March 4, 2024 (month first)"}
                </label>
              ))}
            </fieldset>
          )}
          {preview.columns.length > 0 && (
            <p className="text-sm text-ink-soft">
              Columns read:{" "}
              {preview.columns
                .filter((c) => c.reads)
                .map((c) => `${c.reads}${c.unit ? ` (${c.unit})` : ""} from “${c.header}”`)
                .join(", ")}
              {preview.columns.some((c) => !c.reads) &&
                `; not read: ${preview.columns
                  .filter((c) => !c.reads)
                  .map((c) => `“${c.header}”`)
                  .join(", ")}`}
              .
            </p>
          )}
          {preview.checks.length > 0 && (
            <div>
              <h3 className="font-bold">
                {preview.checks.length} check{preview.checks.length === 1 ? "" : "s"}, {readings} reading
                {readings === 1 ? "" : "s"}
              </h3>
              <ul className="figures text-base">
                {preview.checks.slice(0, 50).map((c) => (
                  <li key={`${c.date}#${c.odometer}`}>
                    {c.date} · {c.odometer.toLocaleString("en")} {engine.odometerUnit} · {c.readings.length} valve
                    {c.readings.length === 1 ? "" : "s"}
                    {c.notes ? ` · “${c.notes}”` : ""}
                  </li>
                ))}
                {preview.checks.length > 50 && <li>and {preview.checks.length - 50} more</li>}
              </ul>
            </div>
          )}
          {bad.length > 0 && (
            <div role="alert" className="rounded-xl border-2 border-tight p-3">
              <h3 className="font-bold">
                ✕ {bad.length} row{bad.length === 1 ? "" : "s"} cannot be brought in
              </h3>
              <ul className="text-base" data-testid="import-problems">
                {bad.slice(0, SHOWN_PROBLEMS).map((r) => (
                  <li key={r.row}>
                    <strong>Row {r.row}:</strong> {r.errors.join("; ")}
                  </li>
                ))}
                {bad.length > SHOWN_PROBLEMS && <li>and {bad.length - SHOWN_PROBLEMS} more rows</li>}
              </ul>
            </div>
          )}
          {skipped.length > 0 && (
            <p className="text-sm text-ink-soft">
              Left out: {skipped.length} row{skipped.length === 1 ? "" : "s"} (
              {[...new Set(skipped.map((r) => r.skipped))].join("; ")}).
            </p>
          )}
          {preview.ok ? (
            <Button type="button" onClick={() => void add()} disabled={busy}>
              Add {preview.checks.length} past check{preview.checks.length === 1 ? "" : "s"}
            </Button>
          ) : (
            <Notice tone="error">Nothing is added while the file has a problem: correct it and choose it again.</Notice>
          )}
        </div>
      )}
    </section>
  );
}
