"use client";

import { TitledSection } from "@/components/ui/controls";
import { useStored } from "@/components/ui/use-stored";
import { useLocal } from "./local-provider";

const DISMISSED_KEY = "lashwright.storage-notice-dismissed";

/**
 * Said once, when the browser refuses to keep our data for good (navigator.storage.persist said
 * no): what that means and what the mechanic can do about it, with a button to put it away. Kept
 * apart from the sync line, which reports where the work is and would otherwise read "All synced"
 * beside a warning about losing data.
 */
export function StorageNotice() {
  const { persisted, waiting } = useLocal();
  const [dismissed, setDismissed] = useStored<boolean>(DISMISSED_KEY, false);
  if (persisted !== false || dismissed) return null;
  return (
    <TitledSection
      titleId="storage-notice-title"
      title="This browser may clear Lashwright's data"
      titleClass="font-bold"
      className="flex flex-col gap-2 rounded-xl border-2 border-line bg-surface p-3"
      testId="storage-notice"
    >
      <p className="text-ink-soft">
        It did not agree to keep what is saved on this phone for good: when space runs low it may delete it
        {waiting > 0 ? `, including the ${waiting} change${waiting === 1 ? "" : "s"} not yet synced` : ""}. What is
        synced stays safe on the server. To keep your work on the phone, add Lashwright to the home screen (in the
        browser&apos;s menu: Install app, or Add to Home screen), and let it sync whenever you have a signal.
      </p>
      <button
        type="button"
        onClick={() => setDismissed(true)}
        className="inline-flex min-h-12 items-center self-start rounded-xl border-2 border-line px-4 font-bold"
      >
        Got it, don&apos;t show again
      </button>
    </TitledSection>
  );
}
