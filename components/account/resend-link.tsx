"use client";

import { useState } from "react";
import { ApiFailure, mutations } from "@/lib/api/client";
import { Button } from "@/components/ui/controls";

/**
 * "Send the link again" for an address not yet confirmed; the server limits how often. With
 * `unsure` (the sign-in page, which must not know whether the address waits), the outcome says so.
 */
export function ResendLink({ email, unsure = false }: { email: string; unsure?: boolean }) {
  const [state, setState] = useState<{ kind: "idle" | "sending" | "sent" | "failed"; message?: string }>({
    kind: "idle",
  });
  const send = async () => {
    setState({ kind: "sending" });
    try {
      await mutations.resendVerification(email);
      setState({ kind: "sent" });
    } catch (e) {
      setState({
        kind: "failed",
        message: e instanceof ApiFailure && e.status !== 0 ? e.message : "Could not ask for it: are you online?",
      });
    }
  };
  return (
    <div className="flex flex-col gap-2">
      <Button type="button" look="plain" onClick={send} disabled={state.kind === "sending"}>
        {state.kind === "sending" ? "Sending…" : "Send the link again"}
      </Button>
      {/* one polite region for the outcome, so a screen reader hears it after the tap */}
      <p role="status" className="text-ink-soft">
        {state.kind === "sent" &&
          `Sent again to ${email}${unsure ? " if that address waits for confirmation" : ""}. It can take a minute; look in the spam folder too.`}
        {state.kind === "failed" && state.message}
      </p>
    </div>
  );
}
