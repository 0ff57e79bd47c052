import type { Metadata } from "next";
import { Suspense } from "react";
import { AuthShell } from "@/components/ui/controls";
import { ResetPassword } from "@/components/account/token-actions";

export const metadata: Metadata = { title: "Choose a new password" };

export default function Page() {
  return (
    <AuthShell title="Choose a new password">
      <Suspense>
        <ResetPassword />
      </Suspense>
    </AuthShell>
  );
}
