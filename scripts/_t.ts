import { loadStructureFile } from '../src/config/load.js';
import { readingsFromStress, companionReading } from '../src/mechanics/forward-model.js';
import { evaluateGroup } from '../src/mechanics/evaluate-group.js';
import { createGroupOutput } from '../src/mechanics/group-model.js';
const s = await loadStructureFile('config/brannock-mere.yaml');
for (const g of s.groups) {
  const m = g.model; const stress = m.n === 3 ? [80, -20, 35] : m.n === 6 ? [-3, -1.5, 0.2, 0.3, -0.4, 0.8] : [120];
  const raw = readingsFromStress(m, stress, 31.5, m.companion ? 150 : NaN, new Float64Array(m.m));
  const out = createGroupOutput(m.m);
  evaluateGroup(m, raw, 31.5, companionReading(m, 150, 31.5), out);
  console.log(g.config.id, Array.from(raw).map(v=>v.toFixed(4)).join(' '), '|', Array.from(out.stressMPa).map(v=>v.toFixed(6)).join(' '), out.residualRmsMicro, out.flags);
}
