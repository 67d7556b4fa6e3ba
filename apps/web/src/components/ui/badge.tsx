import type { ReactNode } from 'react';
import { cn } from '../../lib/cn.js';

export type BadgeTone = 'neutral' | 'spruce' | 'harbor' | 'moss' | 'ochre' | 'brick' | 'clay';

const tones: Record<BadgeTone, string> = {
  neutral: 'bg-paper text-graphite border-rule',
  spruce: 'bg-spruce-wash text-spruce-deep border-spruce/25',
  harbor: 'bg-harbor-wash text-harbor border-harbor/25',
  moss: 'bg-moss-wash text-moss border-moss/25',
  ochre: 'bg-ochre-wash text-ochre-ink border-ochre/40',
  brick: 'bg-brick-wash text-brick border-brick/25',
  clay: 'bg-clay-wash text-[#7e331a] border-clay/30',
};

export function Badge({
  tone = 'neutral',
  children,
  className,
}: {
  tone?: BadgeTone;
  children: ReactNode;
  className?: string;
}) {
  return (
    <span
      className={cn(
        'inline-flex items-center gap-1 rounded-full border px-2 py-0.5 text-xs font-semibold whitespace-nowrap',
        tones[tone],
        className,
      )}
    >
      {children}
    </span>
  );
}
