import type { Metadata } from "next";
import { Suspense } from "react";
import { AuthShell } from "@/components/ui/controls";
import { EmailLinkSignIn } from "@/components/account/token-actions";

export const metadata: Metadata = { title: "Signing in" };

export default function Page() {
  return (
    <AuthShell title="Signing in">
      <Suspense>
        <EmailLinkSignIn />
      </Suspense>
    </AuthShell>
  );
}
