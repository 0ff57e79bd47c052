import type { Metadata } from "next";
import { Suspense } from "react";
import { AppShell } from "@/components/ui/app-shell";
import { CheckListScreen } from "@/components/ui/screens";

export const metadata: Metadata = { title: "Checks" };

export default function Page() {
  return (
    <AppShell title="Checks">
      <Suspense>
        <CheckListScreen />
      </Suspense>
    </AppShell>
  );
}
