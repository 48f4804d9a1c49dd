import { useEffect, useId, useRef, type ReactNode } from "react";
import { Button } from "./button";

/**
 * A modal on the native <dialog> element: focus is trapped and Escape closes it, as browsers
 * implement it, with no script of ours to get wrong.
 */
export function Dialog({ open, onClose, title, children, footer }: { open: boolean; onClose: () => void; title: string; children: ReactNode; footer?: ReactNode }) {
  const ref = useRef<HTMLDialogElement>(null);
  // Its own id, so two dialogs on one page are each named by their own title.
  const titleId = useId();
  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    if (open && !dialog.open) dialog.showModal();
    if (!open && dialog.open) dialog.close();
  }, [open]);
  return (
    <dialog
      ref={ref}
      onClose={onClose}
      aria-labelledby={titleId}
      className="m-auto w-full max-w-md rounded-card border border-line bg-surface-raised p-0 text-ink shadow-overlay backdrop:bg-black/40"
    >
      <div className="p-6">
        <h2 id={titleId} className="text-lg font-semibold">
          {title}
        </h2>
        <div className="mt-3 text-sm text-ink-muted">{children}</div>
      </div>
      <div className="flex justify-end gap-2 border-t border-line bg-surface-sunken px-6 py-3">
        {footer}
        <Button variant="secondary" onClick={onClose}>
          Cancel
        </Button>
      </div>
    </dialog>
  );
}
