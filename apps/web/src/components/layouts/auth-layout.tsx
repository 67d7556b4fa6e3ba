import type { ReactNode } from 'react';
import { BrandMark } from '../ui/brand-mark.js';

type AuthLayoutProps = { title: string; description?: ReactNode; children: ReactNode; footer?: ReactNode };

/** Signed-out pages: one narrow column on paper, the mark and name above the form. */
export function AuthLayout({ title, description, children, footer }: AuthLayoutProps) {
  return (
    <div className="flex min-h-screen flex-col items-center px-4 py-12 sm:py-20">
      <div className="w-full max-w-md">
        <div className="mb-8 flex items-center gap-3">
          <BrandMark className="size-10" />
          <div>
            <p className="text-lg font-bold tracking-tight text-ink">Counterpoise</p>
            <p className="text-sm text-graphite">Study registry and baseline balance</p>
          </div>
        </div>
        <main className="rounded-card border border-rule bg-vellum px-6 py-7 shadow-card sm:px-8">
          <h1 className="text-xl font-semibold text-ink">{title}</h1>
          {description && <div className="mt-1.5 text-sm text-graphite">{description}</div>}
          <div className="mt-6">{children}</div>
        </main>
        {footer && <div className="mt-6 text-sm text-graphite">{footer}</div>}
      </div>
    </div>
  );
}
