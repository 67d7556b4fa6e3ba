import { Callout } from './callout.js';

/**
 * Form-level message area. The live region is always in the DOM so screen readers announce
 * an error that appears after submit.
 */
export function FormAlert({
  message,
  title,
  extra,
}: {
  message: string | null;
  title?: string;
  extra?: string[];
}) {
  return (
    <div aria-live="assertive" aria-atomic="true">
      {message && (
        <Callout tone="danger" title={title}>
          <p>{message}</p>
          {extra && extra.length > 0 && (
            <ul className="mt-1 list-disc pl-5">
              {extra.map((line) => (
                <li key={line}>{line}</li>
              ))}
            </ul>
          )}
        </Callout>
      )}
    </div>
  );
}
