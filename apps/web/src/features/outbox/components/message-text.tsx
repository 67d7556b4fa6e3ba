import { Fragment } from 'react';

const urlPattern = /(https?:\/\/[^\s<>"')\]]+)/g;

/**
 * Plain-text body with http(s) links made clickable, so invite and reset links can be
 * followed. The HTML part is never rendered: React escapes everything here.
 */
export function MessageText({ text }: { text: string }) {
  const parts = text.split(urlPattern);
  return (
    <pre className="overflow-x-auto font-sans text-[0.95rem] leading-relaxed break-words whitespace-pre-wrap text-ink">
      {parts.map((part, i) =>
        i % 2 === 1 ? (
          <a
            key={i}
            href={part}
            rel="noreferrer"
            className="font-semibold break-all text-spruce underline underline-offset-4"
          >
            {part}
          </a>
        ) : (
          <Fragment key={i}>{part}</Fragment>
        ),
      )}
    </pre>
  );
}
