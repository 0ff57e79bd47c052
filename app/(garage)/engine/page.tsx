import type { Metadata } from "next";
import { Suspense } from "react";
import { AppShell } from "@/components/ui/app-shell";
import { EngineScreen } from "@/components/ui/screens";

export const metadata: Metadata = { title: "Engine" };

export default function Page() {
  return (
    <AppShell title="Engine" back={{ href: "/engines", label: "Engines" }}>
      <Suspense>
        <EngineScreen />
      </Suspense>
    </AppShell>
  );
}
