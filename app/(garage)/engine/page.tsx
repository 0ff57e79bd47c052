import type { Metadata } from "next";
import { Suspense } from "react";
import { AppShell } from "@/components/ui/app-shell";
import { EngineDetail } from "@/components/engine/engine-pages";

export const metadata: Metadata = { title: "Engine" };

export default function Page() {
  return (
    <AppShell title="Engine" back={{ href: "/engines", label: "Engines" }}>
      <Suspense>
        <EngineDetail />
      </Suspense>
    </AppShell>
  );
}
