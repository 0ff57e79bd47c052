"use client";

import dynamic from "next/dynamic";

/**
 * The check screen, loaded when the shell shows it: only for a signed-in phone, after the frame is
 * up. A first visit that ends at "sign in" never loads it, and the frame paints before it arrives.
 */
export const CheckPage = dynamic(() => import("./check-screen").then((m) => m.CheckScreen), { ssr: false });
