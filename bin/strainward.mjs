#!/usr/bin/env node
// Runs the compiled dist/ when `npm run build` made it and no file under src/ changed since;
// otherwise (or with STRAINWARD_SOURCE=1) the TypeScript sources through tsx's loader: no build step
// to forget. The loader alone cost `--help` about 0.6 s of its start-up (npm run bench:startup).
import { readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('../', import.meta.url));

/** True when dist/.built exists and no file under src/ is newer than it. */
function distIsFresh() {
  let builtMs;
  try {
    builtMs = statSync(join(root, 'dist', '.built')).mtimeMs;
  } catch {
    return false;
  }
  const src = join(root, 'src');
  for (const entry of readdirSync(src, { recursive: true, withFileTypes: true })) {
    if (entry.isFile() && statSync(join(entry.parentPath ?? entry.path, entry.name)).mtimeMs > builtMs) return false;
  }
  return true;
}

let main;
if (process.env.STRAINWARD_SOURCE !== '1' && distIsFresh()) {
  ({ main } = await import('../dist/cli/main.js'));
} else {
  const { register } = await import('tsx/esm/api');
  register();
  ({ main } = await import('../src/cli/main.ts'));
}
process.exitCode = await main(process.argv);
