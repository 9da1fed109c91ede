import { readFileSync } from 'node:fs';
import { parse } from 'yaml';
import { describe, expect, it } from 'vitest';
import { compileMaterial } from '../../src/config/compile-material.js';
import { loadStructureFile } from '../../src/config/load.js';
import { MaterialSchema } from '../../src/config/material-schema.js';

const library = parse(readFileSync('config/material-library.yaml', 'utf8')) as unknown[];
const byId = new Map(library.map((m) => [(m as { id: string }).id, MaterialSchema.parse(m)]));

describe('material library', () => {
  it('every entry validates and compiles', () => {
    for (const m of byId.values()) expect(compileMaterial(m).ok).toBe(true);
  });

  it('carries the steel constants of EN 1993-1-1', () => {
    // EN 1993-1-1 3.2.6: E = 210000 N/mm2, nu = 0.3, alpha = 12e-6 per K; Table 3.1: f_y = 355 N/mm2 (S355, t <= 40 mm).
    const s = byId.get('steel-s355')!;
    expect(s).toMatchObject({ kind: 'isotropic', E_MPa: 210000, nu: 0.3, alpha_per_degC: 12e-6, yield_strength_MPa: 355 });
  });

  it('carries concrete C30/37 of EN 1992-1-1 Table 3.1', () => {
    // EN 1992-1-1 Table 3.1, C30/37: f_cm = 38 MPa, f_ctm = 2.9 MPa, E_cm = 33 GPa; 3.1.3: nu = 0.2, alpha = 10e-6 per K.
    const c = byId.get('concrete-c30-37')!;
    expect(c).toMatchObject({ E_MPa: 33000, nu: 0.2, alpha_per_degC: 10e-6, tensile_strength_MPa: 2.9, compressive_strength_MPa: 38 });
  });

  it('the example structure uses the library values', async () => {
    const s = await loadStructureFile('config/brannock-mere.yaml');
    for (const m of s.config.materials) expect(m).toEqual({ ...byId.get(m.id)!, description: m.description });
  });
});
