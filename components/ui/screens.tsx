"use client";

import dynamic from "next/dynamic";

/**
 * The garage screens, each loaded once the frame knows someone is signed in on this phone (AppShell
 * renders its content only then): a first visit, or a visitor sent to sign in, loads the frame
 * alone, and the shell paints before the screen's code arrives. The service worker precaches every
 * file of the build, so they open offline as before.
 */
export const AccountScreen = dynamic(
  () => import("@/components/account/account-screen").then((m) => m.AccountSections),
  { ssr: false },
);
export const CheckScreen = dynamic(() => import("@/components/check/check-page").then((m) => m.CheckPage), {
  ssr: false,
});
export const CheckListScreen = dynamic(() => import("@/components/engine/engine-pages").then((m) => m.CheckList), {
  ssr: false,
});
export const ClubScreen = dynamic(() => import("@/components/club/club-panel").then((m) => m.ClubPanel), {
  ssr: false,
});
export const EngineScreen = dynamic(() => import("@/components/engine/engine-pages").then((m) => m.EngineDetail), {
  ssr: false,
});
export const EngineListScreen = dynamic(() => import("@/components/engine/engine-pages").then((m) => m.EngineList), {
  ssr: false,
});
export const EngineFormScreen = dynamic(() => import("@/components/engine/engine-form").then((m) => m.EngineForm), {
  ssr: false,
});
export const ReviewScreen = dynamic(() => import("@/components/review/review-screen").then((m) => m.ReviewScreen), {
  ssr: false,
});
export const TrayScreen = dynamic(() => import("@/components/tray/tray-page").then((m) => m.TrayPage), { ssr: false });
