"use client";

import { useQuery } from "@tanstack/react-query";
import { fetchers, queryKeys } from "@/lib/api/client";
import { Notice } from "@/components/ui/controls";

export function EngineList() {
  const engines = useQuery({ queryKey: queryKeys.engines(), queryFn: fetchers.engines });
  if (engines.isPending) return <p className="text-ink-soft">Loading your engines…</p>;
  if (engines.isError) return <Notice tone="error">{engines.error.message}</Notice>;
  if (engines.data.length === 0) return <Notice>No engines yet.</Notice>;
  return (
    <ul className="flex flex-col gap-3">
      {engines.data.map((e) => (
        <li key={e.id} className="rounded-2xl border border-line bg-surface p-4">
          <p className="text-lg font-bold">{e.name}</p>
          <p className="text-ink-soft">
            {e.cylinders} cylinder{e.cylinders > 1 ? "s" : ""}
          </p>
        </li>
      ))}
    </ul>
  );
}
