import { useEffect, useId, useRef, type ReactNode } from 'react';
import { cn } from '../../lib/cn.js';

type DialogProps = {
  open: boolean;
  onClose: () => void;
  title: ReactNode;
  children: ReactNode;
  className?: string;
};

/**
 * A modal on the native <dialog>: the browser traps focus, closes on Escape and restores
 * focus to the opener when it closes, so no focus-trap code of our own is needed.
 */
export function Dialog({ open, onClose, title, children, className }: DialogProps) {
  const ref = useRef<HTMLDialogElement>(null);
  const titleId = useId();

  useEffect(() => {
    const el = ref.current;
    if (!el) return;
    if (open && !el.open) el.showModal();
    if (!open && el.open) el.close();
  }, [open]);

  return (
    <dialog
      ref={ref}
      aria-labelledby={titleId}
      onClose={onClose}
      onCancel={(e) => {
        e.preventDefault();
        onClose();
      }}
      className={cn(
        'm-auto w-[min(36rem,calc(100vw-2rem))] rounded-card border border-rule bg-vellum p-0 text-ink shadow-card',
        'backdrop:bg-ink/40',
        className,
      )}
    >
      {open && (
        <div className="flex flex-col gap-4 px-5 py-5">
          <h2 id={titleId} className="text-lg font-semibold text-ink">
            {title}
          </h2>
          {children}
        </div>
      )}
    </dialog>
  );
}
