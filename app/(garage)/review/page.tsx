import type { Metadata } from "next";
import { Suspense } from "react";
import { AppShell } from "@/components/ui/app-shell";
import { ReviewScreen } from "@/components/ui/screens";

export const metadata: Metadata = { title: "Review" };

export default function Page() {
  return (
    <AppShell title="Review" back={{ href: "/club", label: "Club" }}>
      <Suspense>
        <ReviewScreen />
      </Suspense>
    </AppShell>
  );
}
