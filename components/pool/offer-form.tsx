"use client";

import { useState } from "react";
import type { LocalTrayItem } from "@/lib/sync/local-db";
import { offerToClub } from "@/lib/sync/later";
import { useLocalCore } from "@/components/sync/local-provider";
import { boundTo, Button, Field, InputField, inputClass, Notice } from "@/components/ui/controls";
import { usePool } from "./use-pool";
import { shimNumber } from "@/lib/lash";
import { parseDecimal } from "@/lib/parse-decimal";

/** Offer spare shims from the tray to a club's pool: only the shims and the note are shared. */
export function OfferForm({ items }: { items: LocalTrayItem[] }) {
  const { db } = useLocalCore();
  const pool = usePool();
  const stocked = items.filter((t) => t.count > 0);
  const [itemId, setItemId] = useState("");
  const [clubId, setClubId] = useState("");
  const [count, setCount] = useState("1");
  const [diameter, setDiameter] = useState("");
  const [note, setNote] = useState("");
  const [message, setMessage] = useState<{ tone: "ok" | "error"; text: string } | null>(null);
  if (pool.clubs.length === 0 || stocked.length === 0) return null;
  const item = stocked.find((t) => t.id === itemId) ?? stocked[0]!;
  const club = pool.clubs.find((c) => c.id === clubId) ?? pool.clubs[0]!;
  return (
    <section
      aria-labelledby="offer-title"
      className="flex flex-col gap-3 rounded-2xl border border-line bg-surface p-4"
    >
      <h2 id="offer-title" className="text-xl font-extrabold">
        Lend spares to the club
      </h2>
      <p className="text-sm text-ink-soft">
        Members of the club see the size, how many, the diameter and your note; nothing else of yours.
      </p>
      <Field id="offer-size" label="Shims">
        <select id="offer-size" className={inputClass} value={item.id} onChange={(e) => setItemId(e.target.value)}>
          {stocked.map((t) => (
            <option key={t.id} value={t.id}>
              {shimNumber(t.size, t.measuredSize)} mm ({t.count} on the tray)
            </option>
          ))}
        </select>
      </Field>
      <InputField id="offer-count" label="How many" inputMode="numeric" {...boundTo(count, setCount)} />
      <InputField
        id="offer-diameter"
        label="Shim diameter (mm)"
        hint="Only engines with the same diameter can use them"
        inputMode="decimal"
        placeholder={item.shimDiameter?.toString() ?? "e.g. 9.48"}
        {...boundTo(diameter, setDiameter)}
      />
      <InputField
        id="offer-note"
        label="Note (optional)"
        hint="Where to collect them, for example"
        maxLength={200}
        {...boundTo(note, setNote)}
      />
      {pool.clubs.length > 1 && (
        <Field id="offer-club" label="Club">
          <select id="offer-club" className={inputClass} value={club.id} onChange={(e) => setClubId(e.target.value)}>
            {pool.clubs.map((c) => (
              <option key={c.id} value={c.id}>
                {c.name}
              </option>
            ))}
          </select>
        </Field>
      )}
      {message && <Notice tone={message.tone}>{message.text}</Notice>}
      <Button
        type="button"
        look="plain"
        onClick={async () => {
          if (!db) return;
          const n = Number(count);
          const d = parseDecimal(diameter) ?? item.shimDiameter ?? null;
          if (!Number.isInteger(n) || n < 1 || n > item.count)
            return setMessage({ tone: "error", text: `Offer 1 to ${item.count}` });
          if (d != null && !(d > 0 && d < 50))
            return setMessage({ tone: "error", text: "Enter the diameter in mm, e.g. 9.48" });
          await offerToClub(db, {
            id: crypto.randomUUID(),
            clubId: club.id,
            size: item.size,
            measuredSize: item.measuredSize,
            count: n,
            shimDiameter: d,
            note: note.trim() || null,
          });
          setMessage({
            tone: "ok",
            text: `✓ Offered ${n} × ${shimNumber(item.size, item.measuredSize)} mm to ${club.name}${navigator.onLine ? "" : " (sent on the next sync)"}`,
          });
          void pool.refresh();
        }}
      >
        Offer to {club.name}
      </Button>
    </section>
  );
}
