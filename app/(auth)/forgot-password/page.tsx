import type { Metadata } from "next";
import { Suspense } from "react";
import { AuthShell } from "@/components/ui/controls";
import { ForgotPassword } from "@/components/account/token-actions";

export const metadata: Metadata = { title: "Forgot your password" };

export default function Page() {
  return (
    <AuthShell title="Forgot your password">
      <Suspense>
        <ForgotPassword />
      </Suspense>
    </AuthShell>
  );
}
