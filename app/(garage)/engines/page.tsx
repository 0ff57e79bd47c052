import type { Metadata } from "next";
import { Suspense } from "react";
import { AppShell } from "@/components/ui/app-shell";
import { EngineListScreen } from "@/components/ui/screens";

export const metadata: Metadata = { title: "Engines" };

export default function Page() {
  return (
    <AppShell title="Engines">
      <Suspense>
        <EngineListScreen />
      </Suspense>
    </AppShell>
  );
}
