import type { Metadata } from "next";
import { AppShell } from "@/components/ui/app-shell";
import { TrayScreen } from "@/components/ui/screens";

export const metadata: Metadata = { title: "Tray" };

export default function Page() {
  return (
    <AppShell title="Tray">
      <TrayScreen />
    </AppShell>
  );
}
