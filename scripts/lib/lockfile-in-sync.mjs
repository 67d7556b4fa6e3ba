// Exit 0 when node_modules holds what package-lock.json asks for, 1 otherwise.
// Used when package-lock.json is newer than node_modules/.package-lock.json: a plain
// `npm install <pkg>` can leave that order of timestamps with nothing to reinstall.
import { readFileSync } from 'node:fs';
import process from 'node:process';

const read = (file) => JSON.parse(readFileSync(file, 'utf8')).packages ?? {};
let wanted;
let installed;
try {
  wanted = read('package-lock.json');
  installed = read('node_modules/.package-lock.json');
} catch {
  process.exit(1);
}
for (const [path, entry] of Object.entries(wanted)) {
  if (path === '' || !path.includes('node_modules/')) continue;
  const have = installed[path];
  // Optional packages for other platforms are legitimately absent.
  if (!have) {
    if (entry.optional) continue;
    process.exit(1);
  }
  if (entry.version !== have.version) process.exit(1);
}
process.exit(0);
