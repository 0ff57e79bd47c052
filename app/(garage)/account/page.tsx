import type { Metadata } from "next";
import { AppShell } from "@/components/ui/app-shell";
import { AccountScreen } from "@/components/ui/screens";

export const metadata: Metadata = { title: "Account" };

export default function Page() {
  return (
    <AppShell title="Account">
      <AccountScreen />
    </AppShell>
  );
}
