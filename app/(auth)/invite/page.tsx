import type { Metadata } from "next";
import { Suspense } from "react";
import { AuthShell } from "@/components/ui/controls";
import { AcceptInvite } from "@/components/account/token-actions";

export const metadata: Metadata = { title: "Club invitation" };

export default function Page() {
  return (
    <AuthShell title="Club invitation">
      <Suspense>
        <AcceptInvite />
      </Suspense>
    </AuthShell>
  );
}
