import type { Metadata } from "next";
import { AppShell } from "@/components/ui/app-shell";
import { TrayPage } from "@/components/tray/tray-page";

export const metadata: Metadata = { title: "Tray" };

export default function Page() {
  return (
    <AppShell title="Tray">
      <TrayPage />
    </AppShell>
  );
}
