/** Every error message at or below one node of react-hook-form's error tree (list-valued fields). */
export function messagesUnder(node: unknown): string[] {
  if (node === null || typeof node !== 'object') return [];
  const out: string[] = [];
  const seen = new Set<unknown>();
  const walk = (n: unknown) => {
    if (n === null || typeof n !== 'object' || seen.has(n)) return;
    seen.add(n);
    const { message } = n as { message?: unknown };
    if (typeof message === 'string' && message) out.push(message);
    for (const [key, child] of Object.entries(n)) {
      // `ref` points at a DOM element; `types` duplicates messages.
      if (key === 'ref' || key === 'types' || key === 'message') continue;
      walk(child);
    }
  };
  walk(node);
  return [...new Set(out)];
}

/** The first message at or below a node, for a field that shows one line. */
export function firstMessage(node: unknown): string | undefined {
  return messagesUnder(node)[0];
}
