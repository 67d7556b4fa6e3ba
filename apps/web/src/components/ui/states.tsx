import type { ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { paths } from '../../config/paths.js';
import { Button } from './button.js';
import { Callout } from './callout.js';
import { cn } from '../../lib/cn.js';

export function Spinner({ className }: { className?: string }) {
  return (
    <span
      aria-hidden="true"
      className={cn(
        'inline-block size-5 animate-spin rounded-full border-2 border-spruce border-r-transparent',
        className,
      )}
    />
  );
}

export function LoadingState({ label = 'Loading…', className }: { label?: string; className?: string }) {
  return (
    <div
      role="status"
      aria-live="polite"
      className={cn('flex items-center gap-3 py-10 text-graphite', className)}
    >
      <Spinner />
      <span>{label}</span>
    </div>
  );
}

type EmptyStateProps = { title: ReactNode; children?: ReactNode; action?: ReactNode; className?: string };

export function EmptyState({ title, children, action, className }: EmptyStateProps) {
  return (
    <div
      className={cn(
        'flex flex-col items-start gap-2 rounded-card border border-dashed border-pebble bg-vellum/60 px-6 py-8',
        className,
      )}
    >
      <p className="font-semibold text-ink">{title}</p>
      {children && <div className="max-w-prose text-sm text-graphite">{children}</div>}
      {action && <div className="mt-2">{action}</div>}
    </div>
  );
}

type ErrorStateProps = { title?: ReactNode; error: unknown; onRetry?: () => void; className?: string };

/** Async failures: announced (role=alert) and retryable where that makes sense. */
export function ErrorState({
  title = 'This could not be loaded',
  error,
  onRetry,
  className,
}: ErrorStateProps) {
  const message = error instanceof Error ? error.message : 'Something went wrong.';
  return (
    <div className={cn('py-4', className)}>
      <Callout tone="danger" role="alert" title={title}>
        <p>{message}</p>
        {onRetry && (
          <Button variant="secondary" size="sm" className="mt-3" onClick={onRetry}>
            Try again
          </Button>
        )}
      </Callout>
    </div>
  );
}

export function NotFoundState({
  title = 'Not found',
  children,
}: {
  title?: ReactNode;
  children?: ReactNode;
}) {
  return (
    <div className="flex flex-col items-start gap-3 py-12">
      <p className="figure text-sm text-clay">404</p>
      <h1 className="text-2xl font-semibold text-ink">{title}</h1>
      <div className="max-w-prose text-graphite">
        {children ?? 'There is nothing at this address. It may have moved, or the link may be mistyped.'}
      </div>
      <Link to={paths.studies.list.href()} className="font-semibold text-spruce underline underline-offset-4">
        Go to your studies
      </Link>
    </div>
  );
}

export function ForbiddenState({ children }: { children?: ReactNode }) {
  return (
    <div className="py-6">
      <Callout tone="info" title="Not available for your role">
        {children ??
          'Your role in this study does not include this section. Ask an administrator if you need it.'}
      </Callout>
    </div>
  );
}
