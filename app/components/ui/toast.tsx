import { useEffect, useState } from "react";
import { cx } from "./cx";

export type ToastMessage = { kind: "success" | "error" | "info"; message: string };

const tones = {
  success: "border-success/40 bg-success-soft text-success",
  error: "border-danger/40 bg-danger-soft text-danger",
  info: "border-info/40 bg-info-soft text-info",
};

/** Shows the one-time message of the last action; stays until dismissed or 6 seconds pass. */
export function Toast({ toast }: { toast: ToastMessage | null }) {
  const [visible, setVisible] = useState<ToastMessage | null>(toast);
  // A new message shows during render, not in an effect (react.dev "You Might Not Need an
  // Effect": adjusting state when a prop changes); the effect only runs the timer.
  const [shownFor, setShownFor] = useState(toast);
  if (shownFor !== toast) {
    setShownFor(toast);
    setVisible(toast);
  }
  useEffect(() => {
    if (!toast) return;
    const timer = setTimeout(() => setVisible(null), 6000);
    return () => clearTimeout(timer);
  }, [toast]);
  return (
    <div aria-live="polite" className="pointer-events-none fixed right-4 bottom-4 z-50 flex flex-col gap-2">
      {visible ? (
        <div role="status" data-testid="toast" className={cx("pointer-events-auto flex max-w-sm items-start gap-3 rounded-control border px-4 py-3 text-sm shadow-overlay", tones[visible.kind])}>
          <span className="flex-1">{visible.message}</span>
          <button type="button" onClick={() => setVisible(null)} className="font-semibold opacity-70 hover:opacity-100" aria-label="Dismiss message">
            ×
          </button>
        </div>
      ) : null}
    </div>
  );
}
