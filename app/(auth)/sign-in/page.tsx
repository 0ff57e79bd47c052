import type { Metadata } from "next";
import { AuthShell } from "@/components/ui/controls";
import { SignInForm } from "@/components/account/sign-in-form";

export const metadata: Metadata = { title: "Sign in" };

const one = (v: string | string[] | undefined) => (typeof v === "string" ? v : undefined);

// Rendered per request with its query (?error, ?email, ?next), so the form is in the HTML a phone
// gets and paints before any script has run; the page needs a signal anyway, and is no offline shell.
export default async function SignInPage({
  searchParams,
}: {
  searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const q = await searchParams;
  return (
    <AuthShell title="Sign in">
      <SignInForm query={{ error: one(q.error), email: one(q.email), next: one(q.next) }} />
    </AuthShell>
  );
}
