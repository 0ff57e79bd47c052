import type { Metadata } from "next";
import { Suspense } from "react";
import { AppShell } from "@/components/ui/app-shell";
import { EngineList } from "@/components/engine/engine-pages";

export const metadata: Metadata = { title: "Engines" };

export default function Page() {
  return (
    <AppShell title="Engines">
      <Suspense>
        <EngineList />
      </Suspense>
    </AppShell>
  );
}
