"use client";

import { useRouter } from "next/navigation";
import { useEffect } from "react";
import { useLocalCore } from "@/components/sync/local-provider";

/** Someone signed in on this phone opens the app at their engines, not at the landing page. */
export function SignedInHome() {
  const { user } = useLocalCore();
  const router = useRouter();
  useEffect(() => {
    if (user) router.replace("/engines");
  }, [user, router]);
  return null;
}
