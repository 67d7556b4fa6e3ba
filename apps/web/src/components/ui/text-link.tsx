import { Link, type LinkProps } from 'react-router-dom';
import { cn } from '../../lib/cn.js';

export const textLinkClass =
  'font-semibold text-spruce underline decoration-spruce/40 underline-offset-4 hover:decoration-spruce';

export function TextLink({ className, ...rest }: LinkProps) {
  return (
    <Link className={cn(textLinkClass, typeof className === 'string' ? className : undefined)} {...rest} />
  );
}
