import type { Metadata } from "next";
import { Suspense } from "react";
import { AuthShell } from "@/components/ui/controls";
import { VerifyEmail } from "@/components/account/token-actions";

export const metadata: Metadata = { title: "Confirm your address" };

export default function Page() {
  return (
    <AuthShell>
      <Suspense>
        <VerifyEmail />
      </Suspense>
    </AuthShell>
  );
}
