import type { Metadata } from "next";
import { AppShell } from "@/components/ui/app-shell";
import { ClubScreen } from "@/components/ui/screens";

export const metadata: Metadata = { title: "Club" };

export default function ClubPage() {
  return (
    <AppShell title="Club">
      <ClubScreen />
    </AppShell>
  );
}
