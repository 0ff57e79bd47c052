"use client";

import Link from "next/link";
import { useRouter, useSearchParams } from "next/navigation";
import { useEffect, useRef, useState, type FormEventHandler, type ReactNode } from "react";
import { useForm } from "react-hook-form";
import { forgotForm, resetForm, verifyForm } from "@/lib/schemas/forms";
import { checkedBy } from "./form-check";
import { ApiFailure, mutations } from "@/lib/api/client";
import { authTitleClass, Button, ButtonLink, InputField, Notice } from "@/components/ui/controls";

/** The pages that e-mail links open. Each reads its token from the address on the client. */

function useOnce(fn: () => void) {
  const ran = useRef(false);
  useEffect(() => {
    if (ran.current) return;
    ran.current = true;
    fn();
  });
}

const signInLink = (
  <Link href="/sign-in" className="font-bold underline">
    sign in
  </Link>
);

/** A link's form: one field (and what was refused), then its button. */
function OneFieldForm({
  onSubmit,
  busy,
  submit,
  children,
}: {
  onSubmit: FormEventHandler<HTMLFormElement>;
  busy: boolean;
  submit: string;
  children: ReactNode;
}) {
  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4">
      {children}
      <Button type="submit" disabled={busy}>
        {submit}
      </Button>
    </form>
  );
}

/**
 * Confirming an address asks for the password chosen at sign-up. The link proves the mailbox, the
 * password proves the account: someone who signed up first with another person's address cannot
 * have their password confirmed by that person's click. Whoever did not sign up chooses their own.
 */
export function VerifyEmail() {
  const token = useSearchParams().get("token") ?? "";
  const router = useRouter();
  const [state, setState] = useState<"form" | "ok" | "bad">("form");
  const [email, setEmail] = useState<string | null>(null);
  const [refused, setRefused] = useState<string | null>(null);
  const form = useForm<{ password: string }>({ resolver: checkedBy(verifyForm), defaultValues: { password: "" } });
  const onSubmit = form.handleSubmit(async ({ password }) => {
    setRefused(null);
    try {
      const r = await mutations.verify(token, password);
      setEmail(r.email);
      // the password was just proved with the mailbox's link: sign the newcomer in with it rather
      // than leave them on an empty sign-in form (if that fails, the form below has the address)
      const { signIn } = await import("next-auth/react");
      const signedIn = await signIn("password", { email: r.email, password, redirect: false }).catch(() => null);
      if (signedIn?.ok && !signedIn.error) return router.replace("/engines");
      setState("ok");
    } catch (e) {
      if (e instanceof ApiFailure && e.fields.password)
        form.setError("password", { message: e.fields.password }, { shouldFocus: true });
      else if (e instanceof ApiFailure && e.status === 429) setRefused(e.message);
      else setState("bad");
    }
  });
  // the heading says where things stand, so it is the first thing read once the page has answered
  if (state === "ok")
    return (
      <>
        <h1 className={authTitleClass}>Your address is confirmed</h1>
        <Notice tone="ok">Welcome to Lashwright. You can now {signInLink}.</Notice>
        <ButtonLink href={email ? `/sign-in?email=${encodeURIComponent(email)}` : "/sign-in"}>Sign in</ButtonLink>
      </>
    );
  if (state === "bad")
    return (
      <>
        <h1 className={authTitleClass}>This link no longer works</h1>
        <Notice tone="error">
          It has expired or was already used. Try to {signInLink}: if the address still needs confirming, the sign-in
          page offers a new link.
        </Notice>
      </>
    );
  return (
    <>
      <h1 className={authTitleClass}>Confirm your address</h1>
      <OneFieldForm onSubmit={onSubmit} busy={form.formState.isSubmitting} submit="Confirm">
        <InputField
          id="password"
          label="Password"
          error={form.formState.errors.password?.message}
          hint="The password you chose when you created the account."
          type="password"
          autoComplete="current-password"
          {...form.register("password")}
        />
        {refused && <Notice tone="error">{refused}</Notice>}
      </OneFieldForm>
      <Notice>
        Did not create this account, or forgot the password? Someone may have signed up with your address.{" "}
        <Link href="/forgot-password" className="font-bold underline">
          Choose your own password
        </Link>{" "}
        instead: it confirms the address and the other password stops working.
      </Notice>
    </>
  );
}

/**
 * A sign-in link signs in only after a press on a button that names the account, and never over
 * someone already signed in on this phone: a link for another account (perhaps an attacker's own,
 * sent to the victim) must not quietly swap the account under them. The server refuses it too.
 */
export function EmailLinkSignIn() {
  const token = useSearchParams().get("token") ?? "";
  const router = useRouter();
  const [state, setState] = useState<
    | { is: "loading" }
    | { is: "bad" }
    | { is: "working" }
    | { is: "ready"; email: string }
    | { is: "other"; email: string; current: string }
    | { is: "same"; email: string; current: string }
  >({ is: "loading" });
  useOnce(() => {
    Promise.all([
      mutations.linkAccount(token).then((r) => r.account.email),
      fetch("/api/auth/session", { credentials: "same-origin" })
        .then((r) => r.json() as Promise<{ user?: { email?: string } }>)
        .then((s) => s.user?.email ?? null),
    ]).then(
      ([email, current]) =>
        setState(
          current === null
            ? { is: "ready", email }
            : current === email
              ? { is: "same", email, current }
              : { is: "other", email, current },
        ),
      () => setState({ is: "bad" }),
    );
  });
  const signInNow = (email: string) => {
    setState({ is: "working" });
    // next-auth's client is loaded on the tap: the forms' pages paint without it
    void import("next-auth/react")
      .then(({ signIn }) => signIn("email-link", { token, redirect: false }))
      .then((r) => {
        if (r?.ok && !r.error) router.replace("/engines");
        else
          setState(r?.error === "SignedInAsOther" ? { is: "other", email, current: "another account" } : { is: "bad" });
      });
  };
  if (state.is === "loading") return <Notice>Checking the link…</Notice>;
  if (state.is === "working") return <Notice>Signing you in…</Notice>;
  if (state.is === "bad")
    return (
      <Notice tone="error">
        This sign-in link has expired or was already used. Ask for a new one on the {signInLink} page.
      </Notice>
    );
  if (state.is === "same")
    return (
      <Notice tone="ok">
        You are already signed in as {state.email}.{" "}
        <Link href="/engines" className="font-bold underline">
          Go to your engines
        </Link>
      </Notice>
    );
  if (state.is === "other")
    return (
      <div className="flex flex-col gap-4">
        <Notice tone="error">
          This phone is signed in as {state.current}, and the link is for {state.email}. Sign out first, then open the
          link again.
        </Notice>
        <Button
          type="button"
          look="plain"
          onClick={() =>
            void import("next-auth/react").then(({ signOut }) => signOut({ callbackUrl: window.location.href }))
          }
        >
          Sign out {state.current}
        </Button>
      </div>
    );
  return (
    <div className="flex flex-col gap-4">
      <Notice>This link signs this phone in to the account of {state.email}. Go on only if that is you.</Notice>
      <Button type="button" onClick={() => signInNow(state.email)}>
        Sign in as {state.email}
      </Button>
    </div>
  );
}

const EMAIL_FIELD = { id: "email", label: "E-mail", type: "email", autoComplete: "email" } as const;
const NEW_PASSWORD_FIELD = {
  id: "password",
  label: "New password",
  type: "password",
  autoComplete: "new-password",
} as const;

export function ForgotPassword() {
  const [sent, setSent] = useState(false);
  const form = useForm<{ email: string }>({ resolver: checkedBy(forgotForm), defaultValues: { email: "" } });
  const onSubmit = form.handleSubmit(async ({ email }) => {
    await mutations.requestReset(email);
    setSent(true);
  });
  if (sent)
    return (
      <Notice tone="ok">
        If that address has an account, a link to choose a new password is on its way. It works for an hour.
      </Notice>
    );
  return (
    <OneFieldForm onSubmit={onSubmit} busy={form.formState.isSubmitting} submit="Send the link">
      <InputField {...EMAIL_FIELD} error={form.formState.errors.email?.message} {...form.register("email")} />
    </OneFieldForm>
  );
}

export function ResetPassword() {
  const token = useSearchParams().get("token") ?? "";
  const [state, setState] = useState<"form" | "ok" | "bad">("form");
  const form = useForm<{ password: string }>({ resolver: checkedBy(resetForm), defaultValues: { password: "" } });
  const onSubmit = form.handleSubmit(async ({ password }) => {
    try {
      await mutations.setPassword(token, password);
      setState("ok");
    } catch (e) {
      if (e instanceof ApiFailure && e.fields.password) form.setError("password", { message: e.fields.password });
      else setState("bad");
    }
  });
  if (state === "ok")
    return <Notice tone="ok">Your new password is set and other devices are signed out. Now {signInLink}.</Notice>;
  if (state === "bad")
    return <Notice tone="error">This link has expired or was already used. Ask for a new one.</Notice>;
  return (
    <OneFieldForm onSubmit={onSubmit} busy={form.formState.isSubmitting} submit="Set the new password">
      <InputField
        {...NEW_PASSWORD_FIELD}
        error={form.formState.errors.password?.message}
        {...form.register("password")}
      />
    </OneFieldForm>
  );
}

export function AcceptInvite() {
  const token = useSearchParams().get("token") ?? "";
  const [state, setState] = useState<"working" | "signin" | "bad" | { joined: string }>("working");
  useOnce(() => {
    mutations.acceptInvite(token).then(
      (r) => setState({ joined: r.clubName }),
      (e: unknown) => setState(e instanceof ApiFailure && e.status === 401 ? "signin" : "bad"),
    );
  });
  // say what the link did: it joined a club, by name
  if (typeof state === "object")
    return (
      <>
        <h2 className="text-2xl font-extrabold" data-testid="joined">
          You joined {state.joined}
        </h2>
        <Notice tone="ok">
          You are now a member: its shim pool, checks shared with it and its mentors are on the club page.
        </Notice>
        <ButtonLink href="/club">Open the club page</ButtonLink>
      </>
    );
  const back = `/sign-in?next=${encodeURIComponent(`/invite?token=${token}`)}`;
  if (state === "signin")
    return (
      <Notice>
        Sign in (or create an account with the invited address) to join the club.{" "}
        <Link href={back} className="font-bold underline">
          Sign in
        </Link>
      </Notice>
    );
  if (state === "bad")
    return <Notice tone="error">This invitation has expired, was used already, or was sent to another address.</Notice>;
  return <Notice>Joining the club…</Notice>;
}
