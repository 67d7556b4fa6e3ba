import type { ReactNode } from 'react';
import { cn } from '../../lib/cn.js';

export type CalloutTone = 'caution' | 'danger' | 'info' | 'success';

const tones: Record<CalloutTone, { box: string; mark: string; glyph: string; label: string }> = {
  caution: {
    box: 'bg-ochre-wash border-ochre text-ochre-ink',
    mark: 'bg-ochre text-white',
    glyph: '!',
    label: 'Caution',
  },
  danger: {
    box: 'bg-brick-wash border-brick text-brick',
    mark: 'bg-brick text-white',
    glyph: '✕',
    label: 'Problem',
  },
  info: {
    box: 'bg-harbor-wash border-harbor text-harbor',
    mark: 'bg-harbor text-white',
    glyph: 'i',
    label: 'Note',
  },
  success: {
    box: 'bg-moss-wash border-moss text-moss',
    mark: 'bg-moss text-white',
    glyph: '✓',
    label: 'Done',
  },
};

type CalloutProps = {
  tone?: CalloutTone;
  title?: ReactNode;
  children?: ReactNode;
  className?: string;
  /** `alert` for async errors that must be announced; `status` for polite news. */
  role?: 'alert' | 'status' | 'note';
  id?: string;
};

/** A bordered notice with a left rule; cautions are ochre, never red, so real errors stay distinct. */
export function Callout({ tone = 'info', title, children, className, role, id }: CalloutProps) {
  const t = tones[tone];
  return (
    <div
      id={id}
      role={role}
      className={cn('flex gap-3 rounded-control border-l-4 border px-4 py-3', t.box, className)}
    >
      <span
        aria-hidden="true"
        className={cn(
          'mt-0.5 flex size-5 shrink-0 items-center justify-center rounded-full text-xs font-bold',
          t.mark,
        )}
      >
        {t.glyph}
      </span>
      <div className="min-w-0 text-sm leading-relaxed">
        <span className="sr-only">{t.label}: </span>
        {title && <p className="font-semibold">{title}</p>}
        {children && <div className={cn(title ? 'mt-0.5' : undefined)}>{children}</div>}
      </div>
    </div>
  );
}
