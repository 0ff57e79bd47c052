"use client";

import type { ShimPlan } from "@/lib/lash";
import type { ValveView } from "@/lib/check/derive";
import type { LocalCheck, LocalEngine } from "@/lib/sync/local-db";
import { Button } from "@/components/ui/controls";

/** The check as a CSV file named after the engine; the writer loads on the tap, not with the page. */
export function CsvDownload({
  engine,
  check,
  views,
  plan,
}: {
  engine: LocalEngine;
  check: LocalCheck;
  views: ValveView[];
  plan: ShimPlan | null;
}) {
  const download = async () => {
    const { checkCsvFile } = await import("@/lib/check/csv");
    const date = new Date(check.startedAt).toISOString().slice(0, 10);
    const { name, text } = checkCsvFile(engine, check.odometer, date, views, plan);
    const url = URL.createObjectURL(new Blob([text], { type: "text/csv;charset=utf-8" }));
    const a = document.createElement("a");
    a.href = url;
    a.download = name;
    a.click();
    // the browser has the file once the click is handled; the address is freed a little later
    setTimeout(() => URL.revokeObjectURL(url), 10_000);
  };
  return (
    <Button type="button" look="plain" onClick={() => void download()}>
      Download CSV
    </Button>
  );
}
