"use client";

import { useState } from "react";
import type { ShimPosition } from "@/lib/lash";
import { SHIM_POSITION_WORDS } from "@/lib/check/shim-position";
import type { LocalEngine } from "@/lib/sync/local-db";
import { saveEngine } from "@/lib/sync/later";
import { useLocalCore } from "@/components/sync/local-provider";
import { Button, TitledSection } from "@/components/ui/controls";

/**
 * For an engine whose profile does not say where its shims sit (made before the profile asked):
 * one tap answers it for this check and every later one, saved and synced with the profile.
 */
export function ShimPositionAsk({ engine }: { engine: LocalEngine }) {
  const { db } = useLocalCore();
  const [error, setError] = useState<string | null>(null);
  const choose = async (p: ShimPosition) => {
    if (!db) return;
    try {
      await saveEngine(db, { ...engine, shimPosition: p });
    } catch (e) {
      setError(e instanceof Error ? e.message : "Could not save");
    }
  };
  return (
    <TitledSection
      titleId="position-ask"
      title="Where do this engine's shims sit?"
      level={3}
      titleClass="text-lg font-extrabold"
      className="flex flex-col gap-2 rounded-2xl border-2 border-tight p-3"
      testId="shim-position-ask"
    >
      <p className="text-sm text-ink-soft">
        The profile does not say yet. Fitting differs: under the bucket, the cams come out. The manual says which.
      </p>
      {(["over", "under"] as const).map((p) => (
        <Button key={p} type="button" look="plain" className="justify-start text-left" onClick={() => void choose(p)}>
          {SHIM_POSITION_WORDS[p].long}
        </Button>
      ))}
      {error && <p className="text-sm font-bold text-tight">✕ {error}</p>}
    </TitledSection>
  );
}
