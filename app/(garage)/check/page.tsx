import type { Metadata } from "next";
import { Suspense } from "react";
import { AppShell } from "@/components/ui/app-shell";
import { CheckScreen } from "@/components/ui/screens";

export const metadata: Metadata = { title: "Check" };

export default function Page() {
  return (
    <AppShell title="Valve check" back={{ href: "/checks", label: "Checks" }}>
      <Suspense>
        <CheckScreen />
      </Suspense>
    </AppShell>
  );
}
