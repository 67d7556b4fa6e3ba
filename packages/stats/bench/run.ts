/**
 * Runs every bench/*.bench.ts file in name order, one after another on one core.
 * A bench file either does its work when imported, or exports `run()` (or a default function),
 * sync or async, which is then called. Timings go to stdout; nothing here asserts on time.
 */
import { readdirSync } from 'node:fs';
import { pathToFileURL } from 'node:url';

const dir = new URL('.', import.meta.url);
const files = readdirSync(dir)
  .filter((f) => f.endsWith('.bench.ts'))
  .sort();

type BenchModule = { run?: () => unknown; default?: unknown };

console.log(`node ${process.version}, ${process.platform}/${process.arch}; bench files: ${files.join(', ')}`);
for (const f of files) {
  console.log(`\n=== ${f} ===`);
  const mod = (await import(pathToFileURL(new URL(f, dir).pathname).href)) as BenchModule;
  const fn = typeof mod.run === 'function' ? mod.run : typeof mod.default === 'function' ? (mod.default as () => unknown) : null;
  if (fn) await fn();
}
