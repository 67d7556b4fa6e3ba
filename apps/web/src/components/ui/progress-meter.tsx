import { cn } from '../../lib/cn.js';

type ProgressMeterProps = {
  value: number;
  max: number;
  label: string;
  className?: string;
  showFigures?: boolean;
};

/** Enrollment against target: the numbers are the content, the bar only supports them. */
export function ProgressMeter({ value, max, label, className, showFigures = true }: ProgressMeterProps) {
  const share = max > 0 ? Math.min(1, Math.max(0, value / max)) : 0;
  return (
    <div className={cn('flex min-w-32 flex-col gap-1', className)}>
      {showFigures && (
        <span className="figure text-sm text-ink">
          {value.toLocaleString('en')} <span className="text-graphite">/ {max.toLocaleString('en')}</span>
        </span>
      )}
      <div
        role="meter"
        aria-label={label}
        aria-valuemin={0}
        aria-valuemax={max}
        aria-valuenow={value}
        className="h-1.5 w-full overflow-hidden rounded-full bg-rule"
      >
        <div className="h-full rounded-full bg-spruce" style={{ width: `${(share * 100).toFixed(1)}%` }} />
      </div>
    </div>
  );
}
