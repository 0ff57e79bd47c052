import type { Metadata } from "next";
import { AppShell } from "@/components/ui/app-shell";
import { EngineList } from "@/components/engine/engine-list";

export const metadata: Metadata = { title: "Engines" };

export default function EnginesPage() {
  return (
    <AppShell title="Engines">
      <EngineList />
    </AppShell>
  );
}
