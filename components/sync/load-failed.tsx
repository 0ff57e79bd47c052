"use client";

import { Component, type ReactNode } from "react";
import { isChunkLoadError } from "@/lib/offline/chunk-error";

/**
 * What a screen shows when its code could not be loaded (or failed): the work is safe on the
 * phone, and one button reloads. Used by the step boundary below and the app's error pages, so a
 * missing piece of code never puts the framework's error screen in front of the mechanic.
 */
export function LoadFailed({ error, retry }: { error: unknown; retry?: () => void }) {
  const chunk = isChunkLoadError(error);
  return (
    <section
      role="alert"
      className="flex flex-col gap-2 rounded-xl border-2 border-tight bg-surface p-3"
      data-testid="load-failed"
    >
      <h2 className="font-bold">
        {chunk ? "This part of the app could not be loaded" : "Something went wrong on this screen"}
      </h2>
      <p>
        Your readings are saved on this phone.{" "}
        {chunk ? "The app was probably updated, or there is no signal and this part was not kept. " : ""}
        Reload to carry on{chunk ? " (with a signal, if this comes back)" : ""}.
      </p>
      <div className="flex flex-wrap gap-2">
        <button
          type="button"
          onClick={() => window.location.reload()}
          className="inline-flex min-h-12 items-center rounded-xl bg-accent px-5 font-bold text-accent-ink"
        >
          Reload
        </button>
        {retry && !chunk && (
          <button
            type="button"
            onClick={retry}
            className="inline-flex min-h-12 items-center rounded-xl border-2 border-line px-5 font-bold"
          >
            Try again
          </button>
        )}
      </div>
    </section>
  );
}

/** Keeps a failing step inside its own frame: the rest of the check (and the sync line) stays. */
export class StepBoundary extends Component<{ children: ReactNode }, { error: unknown }> {
  state = { error: null as unknown };
  static getDerivedStateFromError(error: unknown) {
    return { error };
  }
  componentDidCatch(error: unknown) {
    console.error("[step] failed to show:", error);
  }
  render() {
    return this.state.error ? (
      <LoadFailed error={this.state.error} retry={() => this.setState({ error: null })} />
    ) : (
      this.props.children
    );
  }
}
