/** The Counterpoise mark: a beam on a fulcrum, a large and a small weight in balance. */
export function BrandMark({ className }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={className} aria-hidden="true" focusable="false">
      <rect width="32" height="32" rx="7" fill="#1f5c57" />
      <path d="M16 15 L11 26 H21 Z" fill="#f7f3ec" />
      <rect x="4" y="13" width="24" height="2.5" rx="1.25" fill="#f7f3ec" />
      <circle cx="8" cy="9" r="3.5" fill="#f0b59d" />
      <circle cx="23.5" cy="10" r="2.5" fill="#f7f3ec" />
    </svg>
  );
}
