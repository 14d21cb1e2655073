"use client";

import { useEffect, useId, useRef } from "react";
import { primaryButton, secondaryButton } from "./button-styles";

/**
 * A modal confirmation on the native <dialog>: showModal() moves focus into
 * it, keeps Tab inside and makes the rest of the page inert; Escape closes it
 * (the "cancel" event), which counts as "no". The title labels the dialog and
 * the body describes it (WAI-ARIA Authoring Practices, "Dialog (Modal)").
 */
export function ConfirmDialog({
  open,
  title,
  children,
  confirmLabel,
  cancelLabel = "Cancel",
  busy = false,
  onConfirm,
  onCancel,
  testId,
}: {
  open: boolean;
  title: string;
  children: React.ReactNode;
  confirmLabel: string;
  cancelLabel?: string;
  busy?: boolean;
  onConfirm: () => void;
  onCancel: () => void;
  testId?: string;
}) {
  const ref = useRef<HTMLDialogElement>(null);
  const titleId = useId();
  const bodyId = useId();
  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    if (open && !dialog.open) dialog.showModal();
    if (!open && dialog.open) dialog.close();
  }, [open]);
  return (
    <dialog
      ref={ref}
      aria-labelledby={titleId}
      aria-describedby={bodyId}
      data-testid={testId}
      className="w-[min(32rem,calc(100vw-2rem))] rounded-lg border border-ink-100 p-0 text-ink shadow-xl backdrop:bg-ink/40"
      onCancel={(e) => {
        // Escape: let React state close it, so a later open works again.
        e.preventDefault();
        if (!busy) onCancel();
      }}
    >
      <div className="space-y-3 p-5">
        <h2 id={titleId} className="text-lg font-semibold">
          {title}
        </h2>
        <div id={bodyId} className="space-y-2 text-sm text-ink-700">
          {children}
        </div>
        <div className="flex justify-end gap-2 pt-2">
          {/* Focus lands on the safe choice first. */}
          <button type="button" className={secondaryButton} onClick={onCancel} disabled={busy} autoFocus>
            {cancelLabel}
          </button>
          <button type="button" className={primaryButton} onClick={onConfirm} disabled={busy}>
            {busy ? "Working…" : confirmLabel}
          </button>
        </div>
      </div>
    </dialog>
  );
}
