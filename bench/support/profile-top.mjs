// Prints the functions of a .cpuprofile by self time (and the files by self time): `node bench/support/profile-top.mjs FILE [N]`.
import { readFileSync } from 'node:fs';

const [file, n = '40'] = process.argv.slice(2);
const p = JSON.parse(readFileSync(file, 'utf8'));
const byId = new Map(p.nodes.map((x) => [x.id, x]));
const self = new Map();
const dt = p.timeDeltas;
for (let i = 0; i < p.samples.length; i++) self.set(p.samples[i], (self.get(p.samples[i]) ?? 0) + (dt[i] ?? 0));
const total = [...self.values()].reduce((a, b) => a + b, 0);
const fn = new Map();
const files = new Map();
for (const [id, us] of self) {
  const cf = byId.get(id).callFrame;
  const url = cf.url.replace(/^.*\/(src|node_modules|bench)\//, '$1/');
  const key = `${cf.functionName || '(anonymous)'} ${url}:${cf.lineNumber + 1}`;
  fn.set(key, (fn.get(key) ?? 0) + us);
  files.set(url || cf.functionName, (files.get(url || cf.functionName) ?? 0) + us);
}
const pct = (us) => `${((100 * us) / total).toFixed(1).padStart(5)} %`;
console.log(`total ${(total / 1000).toFixed(0)} ms sampled`);
for (const [k, us] of [...fn].sort((a, b) => b[1] - a[1]).slice(0, Number(n))) console.log(pct(us), k);
console.log('--- by file');
for (const [k, us] of [...files].sort((a, b) => b[1] - a[1]).slice(0, 30)) console.log(pct(us), k);
// Inclusive time: each sample counted once for every distinct function on its stack.
const parent = new Map();
for (const x of p.nodes) for (const c of x.children ?? []) parent.set(c, x.id);
const keyOf = (id) => { const cf = byId.get(id).callFrame; return `${cf.functionName || '(anonymous)'} ${cf.url.replace(/^.*\/(src|node_modules|bench)\//, '$1/')}:${cf.lineNumber + 1}:${cf.columnNumber + 1}`; };
const incl = new Map();
for (let i = 0; i < p.samples.length; i++) {
  const seen = new Set();
  for (let id = p.samples[i]; id !== undefined; id = parent.get(id)) seen.add(keyOf(id));
  for (const k of seen) incl.set(k, (incl.get(k) ?? 0) + (dt[i] ?? 0));
}
console.log('--- inclusive');
for (const [k, us] of [...incl].sort((a, b) => b[1] - a[1]).slice(0, Number(n))) console.log(pct(us), k);
