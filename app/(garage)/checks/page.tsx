import type { Metadata } from "next";
import { Suspense } from "react";
import { AppShell } from "@/components/ui/app-shell";
import { CheckList } from "@/components/engine/engine-pages";

export const metadata: Metadata = { title: "Checks" };

export default function Page() {
  return (
    <AppShell title="Checks">
      <Suspense>
        <CheckList />
      </Suspense>
    </AppShell>
  );
}
