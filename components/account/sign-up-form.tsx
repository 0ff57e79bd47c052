"use client";

import Link from "next/link";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { signUpForm } from "@/lib/schemas/forms";
import { checkedBy } from "./form-check";
import { PASSWORD_MIN } from "@/lib/auth/password-list";
import { ApiFailure, mutations } from "@/lib/api/client";
import { Button, InputField, Notice } from "@/components/ui/controls";
import { EmailField, SwitchLink } from "./auth-fields";
import { ResendLink } from "./resend-link";

export function SignUpForm() {
  const [done, setDone] = useState<string | null>(null);
  const [error, setError] = useState<string | null>(null);
  const form = useForm<{ email: string; name: string; password: string }>({
    resolver: checkedBy(signUpForm),
    defaultValues: { email: "", name: "", password: "" },
  });
  const { errors, isSubmitting } = form.formState;

  const onSubmit = form.handleSubmit(async (values) => {
    setError(null);
    try {
      await mutations.signUp(values);
      setDone(values.email);
    } catch (e) {
      if (e instanceof ApiFailure)
        for (const [k, v] of Object.entries(e.fields)) form.setError(k as keyof typeof values, { message: v });
      setError(e instanceof Error ? e.message : "Sign-up failed");
    }
  });

  if (done)
    return (
      <div className="flex flex-col gap-4">
        <Notice tone="ok">
          We sent a link to <strong>{done}</strong>. Open it on any device to confirm the address, then{" "}
          <Link href="/sign-in" prefetch={false} className="font-bold underline">
            sign in
          </Link>
          .
        </Notice>
        <p className="text-ink-soft">Nothing after a few minutes? Look in the spam folder, or have it sent again.</p>
        <ResendLink email={done} />
        <Button type="button" look="quiet" onClick={() => setDone(null)}>
          Wrong address? Sign up again
        </Button>
      </div>
    );
  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4">
      {error && <Notice tone="error">{error}</Notice>}
      <InputField
        id="name"
        label="Your name"
        error={errors.name?.message}
        autoComplete="name"
        {...form.register("name")}
      />
      <EmailField error={errors.email?.message} {...form.register("email")} />
      <InputField
        id="password"
        label="Password"
        error={errors.password?.message}
        hint={`At least ${PASSWORD_MIN} characters. A few words you will remember work well.`}
        type="password"
        autoComplete="new-password"
        {...form.register("password")}
      />
      <Button type="submit" disabled={isSubmitting}>
        {isSubmitting ? "Creating…" : "Create account"}
      </Button>
      <SwitchLink href="/sign-in">I have an account: sign in</SwitchLink>
    </form>
  );
}
