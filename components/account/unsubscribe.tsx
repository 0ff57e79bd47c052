"use client";

import Link from "next/link";
import { useSearchParams } from "next/navigation";
import { useState } from "react";
import { mutations } from "@/lib/api/client";
import { authTitleClass, Button, Notice } from "@/components/ui/controls";

/**
 * The page a mail's "to stop them" link opens. Opening it changes nothing (a link scanner or a
 * preview fetches addresses on its own, RFC 8058 1); the press on the button does.
 */
export function Unsubscribe() {
  const token = useSearchParams().get("token") ?? "";
  const [state, setState] = useState<"ask" | "working" | "done" | "bad">("ask");
  const stop = async () => {
    setState("working");
    try {
      await mutations.unsubscribe(token);
      setState("done");
    } catch {
      setState("bad");
    }
  };
  if (state === "done")
    return (
      <>
        <h1 className={authTitleClass}>No more notices</h1>
        <Notice tone="ok">
          Lashwright will send this address no more notices or invitations. Links you ask for (a sign-in link, a new
          password) still come. With an account, you can turn notices back on from your{" "}
          <Link href="/account" className="font-bold underline">
            account page
          </Link>
          .
        </Notice>
      </>
    );
  if (state === "bad")
    return (
      <>
        <h1 className={authTitleClass}>This link does not work</h1>
        <Notice tone="error">
          It is not a link Lashwright made, or it was cut short. Open it again from the mail, or turn notices off on
          your account page.
        </Notice>
      </>
    );
  return (
    <>
      <h1 className={authTitleClass}>Stop e-mails from Lashwright?</h1>
      <p>Notices (comments, verdicts, loans) and invitations stop for this address. Links you ask for still come.</p>
      <Button type="button" onClick={() => void stop()} disabled={state === "working"}>
        Stop these e-mails
      </Button>
    </>
  );
}
