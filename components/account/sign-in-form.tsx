"use client";

import { useRouter } from "next/navigation";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { signInForm } from "@/lib/schemas/forms";
import { checkedBy } from "./form-check";
import { mutations } from "@/lib/api/client";
import { Button, ButtonLink, InputField, Notice } from "@/components/ui/controls";
import { EmailField, SwitchLink } from "./auth-fields";
import { ResendLink } from "./resend-link";
import { safeNext } from "@/lib/auth/safe-next";
import { useIsClient } from "@/components/ui/use-stored";

/**
 * One answer for a wrong password and for an address not yet confirmed, so a sign-up followed by a
 * sign-in cannot tell which addresses have accounts (OWASP ASVS 5.0 V6 Authentication). The message
 * names both, so a newcomer who has not opened the mail yet knows what to do.
 */
const MESSAGES: Record<string, string> = {
  CredentialsSignin:
    "That e-mail and password do not match an account. Signed up just now? Confirm your e-mail first: open the link we sent you, then sign in here.",
  Throttled: "Too many failed attempts. Wait 15 minutes, or sign in with an e-mail link.",
  Busy: "Too many people are signing in right now. Try again in a moment.",
};

/**
 * The query's values come from the server's render (app/(auth)/sign-in/page.tsx), so the whole form
 * is in the page's HTML and shows before the scripts run. Until they have, its submit button is
 * disabled: a form sent by the browser alone would put the password in the address.
 */
export function SignInForm({ query }: { query: { error?: string; email?: string; next?: string } }) {
  const router = useRouter();
  const hydrated = useIsClient();
  const [error, setError] = useState<string | null>(query.error ? (MESSAGES[query.error] ?? "Sign-in failed.") : null);
  const [sent, setSent] = useState<string | null>(null);
  // the address typed, which may be one still waiting for confirmation: its link is offered again
  const [unconfirmed, setUnconfirmed] = useState<string | null>(null);
  const form = useForm<{ email: string; password: string }>({
    resolver: checkedBy(signInForm),
    // no default unless the link gave one: what was typed before the scripts ran is kept
    defaultValues: query.email ? { email: query.email } : undefined,
  });
  const { errors, isSubmitting } = form.formState;

  const onSubmit = form.handleSubmit(async (values) => {
    setError(null);
    setUnconfirmed(null);
    // next-auth's client is loaded on the tap: the page paints and takes typing without it
    const { signIn } = await import("next-auth/react");
    const res = await signIn("password", { ...values, redirect: false });
    if (res?.ok && !res.error) router.push(safeNext(query.next, window.location.origin));
    else {
      setError(MESSAGES[res?.error ?? ""] ?? "Sign-in failed. Try again.");
      if (res?.error === "CredentialsSignin") setUnconfirmed(values.email);
    }
  });

  const sendLink = async () => {
    const ok = await form.trigger("email");
    if (!ok) return;
    const r = await mutations.requestLink(form.getValues("email")).catch(() => null);
    setSent(
      r
        ? "If that address has an account, a sign-in link is on its way. Open it on this phone."
        : "Could not send the link: are you online?",
    );
  };

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4">
      {error && <Notice tone="error">{error}</Notice>}
      {unconfirmed && <ResendLink email={unconfirmed} unsure />}
      {sent && <Notice tone="ok">{sent}</Notice>}
      <EmailField error={errors.email?.message} defaultValue={query.email} {...form.register("email")} />
      <InputField
        id="password"
        label="Password"
        error={errors.password?.message}
        type="password"
        autoComplete="current-password"
        {...form.register("password")}
      />
      <Button type="submit" disabled={!hydrated || isSubmitting}>
        {isSubmitting ? "Signing in…" : "Sign in"}
      </Button>
      <Button type="button" look="plain" onClick={sendLink}>
        E-mail me a sign-in link instead
      </Button>
      <SwitchLink href="/forgot-password">Forgot your password?</SwitchLink>
      <div className="flex flex-col gap-2 border-t border-line pt-4">
        <p className="font-bold">New to Lashwright?</p>
        <ButtonLink href="/sign-up" look="plain" prefetch={false}>
          Create an account
        </ButtonLink>
      </div>
    </form>
  );
}
