// `npm run build`: src/ compiled to dist/ (tsc, tsconfig.build.json), the files that are not
// TypeScript (the live page's assets) copied beside them, and dist/.built stamped with the time
// the build began. bin/strainward.mjs runs dist/ only while no file under src/ is newer than that.
import { spawnSync } from 'node:child_process';
import { cpSync, mkdirSync, readdirSync, rmSync, utimesSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const src = join(root, 'src');
const dist = join(root, 'dist');
const began = new Date(); // a file saved while tsc runs is newer than the stamp: dist counts as stale
rmSync(dist, { recursive: true, force: true });
const tsc = createRequire(import.meta.url).resolve('typescript/bin/tsc');
const r = spawnSync(process.execPath, [tsc, '-p', join(root, 'tsconfig.build.json')], { stdio: 'inherit' });
if (r.status !== 0) {
  rmSync(dist, { recursive: true, force: true }); // no half-built dist for the launcher to pick up
  process.exit(r.status ?? 1);
}
let copied = 0;
for (const entry of readdirSync(src, { recursive: true, withFileTypes: true })) {
  if (!entry.isFile() || entry.name.endsWith('.ts')) continue;
  const from = join(entry.parentPath ?? entry.path, entry.name);
  const to = join(dist, from.slice(src.length));
  mkdirSync(dirname(to), { recursive: true });
  cpSync(from, to);
  copied++;
}
const stamp = join(dist, '.built');
writeFileSync(stamp, `built from src/ at ${began.toISOString()}\n`);
utimesSync(stamp, began, began);
console.log(`build: dist/ from src/ (${copied} other files copied)`);
