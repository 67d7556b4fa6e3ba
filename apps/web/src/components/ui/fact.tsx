import type { ReactNode } from 'react';

/** One labelled fact in a description list (`<dl>`): a small uppercase label over its value. */
export function Fact({ label, children }: { label: string; children: ReactNode }) {
  return (
    <div className="flex min-w-0 flex-col gap-0.5">
      <dt className="text-xs font-semibold tracking-wide text-graphite uppercase">{label}</dt>
      <dd className="text-ink">{children}</dd>
    </div>
  );
}
