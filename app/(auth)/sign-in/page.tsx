import type { Metadata } from "next";
import { Suspense } from "react";
import { AuthShell } from "@/components/ui/controls";
import { SignInForm } from "@/components/account/sign-in-form";

export const metadata: Metadata = { title: "Sign in" };

export default function SignInPage() {
  return (
    <AuthShell title="Sign in">
      <Suspense>
        <SignInForm />
      </Suspense>
    </AuthShell>
  );
}
