import type { Metadata } from "next";
import { Suspense } from "react";
import { AppShell } from "@/components/ui/app-shell";
import { CheckPage } from "@/components/check/check-page";

export const metadata: Metadata = { title: "Check" };

export default function Page() {
  return (
    <AppShell title="Valve check" back={{ href: "/checks", label: "Checks" }}>
      <Suspense>
        <CheckPage />
      </Suspense>
    </AppShell>
  );
}
