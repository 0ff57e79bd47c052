"use client";

import { useLiveQuery } from "@/components/sync/use-live-query";
import { useState } from "react";
import { saveTrayItem } from "@/lib/sync/later";
import { useLocalCore } from "@/components/sync/local-provider";
import { boundTo, Button, InputField, Notice } from "@/components/ui/controls";
import { OfferForm } from "@/components/pool/offer-form";
import { sameLength, shimNumber } from "@/lib/lash";
import { parseDecimal } from "@/lib/parse-decimal";

/** The loose shims on hand, by size and count; the plan takes from here and fitting updates it. */
export function TrayPage() {
  const { db } = useLocalCore();
  const items = useLiveQuery(async () => db?.tray.orderBy("size").toArray(), [db]);
  const [size, setSize] = useState("");
  const [measured, setMeasured] = useState(false);
  const [diameter, setDiameter] = useState("");
  const [error, setError] = useState<string | null>(null);
  if (!items) return null;
  const add = async () => {
    if (!db) return;
    const n = parseDecimal(size);
    if (n == null || !Number.isFinite(n) || n <= 0 || n > 20) return setError("Enter the shim's size in mm, e.g. 2.65");
    const d = parseDecimal(diameter);
    if (d != null && (!Number.isFinite(d) || d <= 0 || d > 60))
      return setError("Enter the shim's diameter in mm, e.g. 7.48, or leave it empty");
    setError(null);
    // one row per size and diameter: shims of two systems never share a count
    const same = items.find((t) => sameLength(t.size, n) && (t.shimDiameter ?? null) === d);
    await saveTrayItem(
      db,
      same
        ? { ...same, count: same.count + 1 }
        : { id: crypto.randomUUID(), size: n, measuredSize: measured, count: 1, shimDiameter: d },
    );
    setSize("");
  };
  const total = items.reduce((s, t) => s + t.count, 0);
  return (
    <div className="flex flex-col gap-4">
      <p className="figures font-bold">
        {total} shim{total === 1 ? "" : "s"} in {items.filter((t) => t.count > 0).length} sizes
      </p>
      {items.length === 0 && (
        <Notice>The tray is empty. Shims that come out of an engine and are not reused land here.</Notice>
      )}
      <ul className="flex flex-col gap-2">
        {/* a size whose last shim has gone stays in the records (and the history) but not on the list */}
        {items
          .filter((t) => t.count > 0)
          .map((t) => (
            <li
              key={t.id}
              className="flex flex-wrap items-center gap-x-3 gap-y-2 rounded-xl border border-line bg-surface p-3"
            >
              <span className="figures min-w-20 text-2xl font-extrabold">{shimNumber(t.size, t.measuredSize)}</span>
              <span className="text-sm text-ink-soft">
                mm{t.measuredSize ? " (micrometer)" : ""}
                {t.shimDiameter != null ? <span className="block">{t.shimDiameter} mm across</span> : null}
              </span>
              <span className="ml-auto flex items-center gap-2">
                <button
                  type="button"
                  aria-label={`One fewer ${t.size} mm`}
                  disabled={t.count === 0}
                  onClick={() => db && saveTrayItem(db, { ...t, count: t.count - 1 })}
                  className="min-h-12 min-w-12 rounded-xl border-2 border-line text-2xl font-bold disabled:opacity-40"
                >
                  −
                </button>
                {/* the count the buttons change: an output (a status) may carry a name, a plain span may not */}
                <output
                  className="figures min-w-10 text-center text-xl font-bold"
                  aria-label={`${t.count} of ${t.size} mm`}
                >
                  ×{t.count}
                </output>
                <button
                  type="button"
                  aria-label={`One more ${t.size} mm`}
                  onClick={() => db && saveTrayItem(db, { ...t, count: t.count + 1 })}
                  className="min-h-12 min-w-12 rounded-xl border-2 border-line text-2xl font-bold"
                >
                  +
                </button>
              </span>
            </li>
          ))}
      </ul>
      <section className="flex flex-col gap-3 rounded-2xl border border-dashed border-line p-4">
        <h2 className="text-xl font-bold">Add a shim</h2>
        <InputField
          id="tray-size"
          label="Size (mm)"
          error={error ?? undefined}
          inputMode="decimal"
          className="figures"
          {...boundTo(size, setSize)}
        />
        <InputField
          id="tray-diameter"
          label="Shim diameter (mm, optional)"
          hint="Only engines that take this diameter will use it"
          inputMode="decimal"
          className="figures"
          {...boundTo(diameter, setDiameter)}
        />
        <label className="flex min-h-12 items-center gap-3 font-bold">
          <input
            type="checkbox"
            className="h-6 w-6"
            checked={measured}
            onChange={(e) => setMeasured(e.target.checked)}
          />
          Measured with a micrometer
        </label>
        <Button type="button" look="plain" onClick={add}>
          Add to tray
        </Button>
      </section>
      <OfferForm items={items} />
    </div>
  );
}
