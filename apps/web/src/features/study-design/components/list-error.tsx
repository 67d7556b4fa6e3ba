/** The message of a whole list (e.g. "A study needs at least two arms"), not of its items. */
export function ListError({ node }: { node: unknown }) {
  if (!node || typeof node !== 'object') return null;
  const { root, message } = node as { root?: { message?: unknown }; message?: unknown };
  const text =
    typeof root?.message === 'string' ? root.message : typeof message === 'string' ? message : null;
  if (!text) return null;
  return (
    <p role="alert" className="text-sm font-medium text-brick">
      <span aria-hidden="true">✕ </span>
      {text}
    </p>
  );
}
