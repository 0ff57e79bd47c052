import type { Metadata } from "next";
import { Suspense } from "react";
import { AppShell } from "@/components/ui/app-shell";
import { EngineFormScreen } from "@/components/ui/screens";

export const metadata: Metadata = { title: "Engine profile" };

export default function Page() {
  return (
    <AppShell title="Engine profile" back={{ href: "/engines", label: "Engines" }}>
      <Suspense>
        <EngineFormScreen />
      </Suspense>
    </AppShell>
  );
}
