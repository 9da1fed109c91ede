import { describe, expect, it, vi } from 'vitest';
import { main } from '../../src/cli/main.js';
import { loadStructureFile } from '../../src/config/load.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '', err = '';
  const o = vi.spyOn(process.stdout, 'write').mockImplementation((s) => { out += String(s); return true; });
  const e = vi.spyOn(process.stderr, 'write').mockImplementation((s) => { err += String(s); return true; });
  try {
    const code = await main(['node', 'strainward', ...args]);
    return { code, out, err };
  } finally {
    o.mockRestore();
    e.mockRestore();
  }
}

describe('strainward calc', () => {
  it('prints one JSON object with every intermediate, and the stress the readings were made from', async () => {
    const s = await loadStructureFile('config/brannock-mere.yaml');
    const g = s.groupsById.get('web-north-pier')!.model;
    // Readings made by running the mechanics backwards from sx = 80, sy = -20, txy = 35 MPa at 31.5 degC.
    const raw = readingsFromStress(g, [80, -20, 35], 31.5, Number.NaN, new Float64Array(3));
    const args = ['calc', '-c', 'config/brannock-mere.yaml', '-g', 'web-north-pier', '-t', '31.5',
      '-r', `rw-np-a=${raw[0]}`, `ch02=${raw[1]}`, `ch03=${raw[2]}`, '--json'];
    const { code, out } = await run(args);
    expect(code).toBe(0);
    const r = JSON.parse(out);
    expect(r.stress_MPa[0]).toBeCloseTo(80, 9);
    expect(r.stress_MPa[1]).toBeCloseTo(-20, 9);
    expect(r.stress_MPa[5]).toBeCloseTo(35, 9);
    expect(r.stress_MPa[2]).toBeNull();
    expect(r.elements).toHaveLength(3);
    expect(r.elements[0].apparent_thermal_micro).not.toBeNull();
    expect(r.residual_rms_micro).toBeNull();
    expect(r.von_mises_MPa).toBeCloseTo(Math.sqrt(80 * 80 + 80 * 20 + 400 + 3 * 35 * 35), 9);
  });

  it('prints a readable table with the safety notice', async () => {
    const { code, out } = await run(['calc', '-c', 'config/brannock-mere.yaml', '-g', 'flange-south-mid1', '-r', 'ch04=500', '-t', '14']);
    expect(code).toBe(0);
    expect(out).toContain('apparent thermal (ue)');
    expect(out).toContain('does not replace qualified engineering judgement');
    expect(out).toContain('Missing data is itself an alarm');
  });

  it('names a bad option, an unknown group and a missing reading, with usage exit code 2', async () => {
    const bad = await run(['calc', '-c', 'config/brannock-mere.yaml', '-g', 'flange-south-mid1', '-r', 'ch04:500', '-t', '14']);
    expect(bad.code).toBe(2);
    expect(bad.err).toContain('--reading: expected id=value');
    const unknown = await run(['calc', '-c', 'config/brannock-mere.yaml', '-g', 'nope', '-r', 'a=1', '-t', '14']);
    expect(unknown.code).toBe(2);
    expect(unknown.err).toContain('unknown group "nope"');
    const missing = await run(['calc', '-c', 'config/brannock-mere.yaml', '-g', 'web-north-pier', '-r', 'ch01=0.1', '-t', '14']);
    expect(missing.err).toContain('no reading given for rw-np-b, rw-np-c');
  });

  it('exits 3 on an invalid configuration and lists its problems', async () => {
    const { code, err } = await run(['calc', '-c', 'test/fixtures/invalid-structure.yaml', '-g', 'x', '-r', 'a=1', '-t', '1']);
    expect(code).toBe(3);
    expect(err).toContain('groups[0].elements[1].angle_deg: expected a number, received string');
  });
});
