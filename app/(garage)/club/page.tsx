import type { Metadata } from "next";
import { AppShell } from "@/components/ui/app-shell";
import { ClubPanel } from "@/components/club/club-panel";

export const metadata: Metadata = { title: "Club" };

export default function ClubPage() {
  return (
    <AppShell title="Club">
      <ClubPanel />
    </AppShell>
  );
}
