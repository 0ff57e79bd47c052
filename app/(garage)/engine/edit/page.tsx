import type { Metadata } from "next";
import { Suspense } from "react";
import { AppShell } from "@/components/ui/app-shell";
import { EngineForm } from "@/components/engine/engine-form";

export const metadata: Metadata = { title: "Engine profile" };

export default function Page() {
  return (
    <AppShell title="Engine profile" back={{ href: "/engines", label: "Engines" }}>
      <Suspense>
        <EngineForm />
      </Suspense>
    </AppShell>
  );
}
