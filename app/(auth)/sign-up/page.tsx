import type { Metadata } from "next";
import { AuthShell } from "@/components/ui/controls";
import { SignUpForm } from "@/components/account/sign-up-form";

export const metadata: Metadata = { title: "Create an account" };

export default function SignUpPage() {
  return (
    <AuthShell title="Create an account">
      <SignUpForm />
    </AuthShell>
  );
}
