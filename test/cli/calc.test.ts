import { describe, expect, it, vi } from 'vitest';
import { loadStructureFile } from '../../src/config/load.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';
import { CAUTION } from '../../src/model/caution.js';
import { runCli } from '../support/cli-in-process.js';

const run = runCli;

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

  it('takes the logger/channel form it prints, and gives the same result as the channel id', async () => {
    const base = ['calc', '-c', 'config/brannock-mere.yaml', '-g', 'flange-south-mid1', '-t', '14', '--json'];
    const byPath = await run([...base, '-r', 'lg-span1/ch04=500']);
    const byChannel = await run([...base, '-r', 'ch04=500']);
    expect(byPath.code).toBe(0);
    expect(JSON.parse(byPath.out).stress_MPa).toEqual(JSON.parse(byChannel.out).stress_MPa);
    expect(JSON.parse(byPath.out).elements[0].raw).toBe(500);
    expect(JSON.parse(byPath.out).elements[0].channel).toBe('lg-span1/ch04');
    const twice = await run([...base, '-r', 'lg-span1/ch04=500', 'sg-sm-a=501']);
    expect(twice.code).toBe(2);
    expect(twice.err).toContain('are the same element (sg-sm-a)');
  });

  it('refuses a reading for a channel the group does not read (exit 2), suggesting the nearest', async () => {
    const base = ['calc', '-c', 'config/brannock-mere.yaml', '-g', 'flange-south-mid1', '-t', '14'];
    const bogus = await run([...base, '-r', 'ch04=500', 'bogus=5']);
    expect(bogus.code).toBe(2);
    expect(bogus.err).toContain('"bogus": not an element of group "flange-south-mid1", which reads sg-sm-a (lg-span1/ch04)');
    const typo = await run([...base, '-r', 'ch4=500']);
    expect(typo.code).toBe(2);
    expect(typo.err).toContain('"ch4" (did you mean "ch04"?)');
    const group = await run(['calc', '-c', 'config/brannock-mere.yaml', '-g', 'flange-south-mid', '-r', 'ch04=1', '-t', '14']);
    expect(group.err).toContain('unknown group "flange-south-mid" (did you mean "flange-south-mid1"?)');
  });

  it('says what form a temperature, a companion and a reading take', async () => {
    const base = ['calc', '-c', 'config/brannock-mere.yaml', '-g', 'flange-south-mid1'];
    const unit = await run([...base, '-r', 'ch04=500', '-t', '31.5C']);
    expect(unit.code).toBe(2);
    expect(unit.err).toContain('--temperature: expected degC as a plain number (e.g. 31.5 or -4, no unit), or "missing", received "31.5C"');
    const companion = await run([...base, '-r', 'ch04=500', '-t', '14', '--companion', '3x']);
    expect(companion.code).toBe(2);
    expect(companion.err).toContain('--companion: expected the companion gauge\'s raw reading as a plain number');
    const value = await run([...base, '-r', 'ch04=1.2.3', '-t', '14']);
    expect(value.code).toBe(2);
    expect(value.err).toContain('--reading: expected id=value (a number, or null for a failed element), received "ch04=1.2.3"');
  });

  it('shows the result against each configured limit of the group, and the notice in --json', async () => {
    const s = await loadStructureFile('config/brannock-mere.yaml');
    const g = s.groupsById.get('web-north-pier')!.model;
    const raw = readingsFromStress(g, [80, -20, 35], 31.5, Number.NaN, new Float64Array(3));
    const { code, out } = await run(['calc', '-c', 'config/brannock-mere.yaml', '-g', 'web-north-pier', '-t', '31.5',
      '-r', `rw-np-a=${raw[0]}`, `rw-np-b=${raw[1]}`, `rw-np-c=${raw[2]}`, '--json']);
    expect(code).toBe(0);
    const r = JSON.parse(out);
    expect(r.notice).toContain('does not replace qualified engineering judgement');
    expect(r.notice).toContain('Alarm limits are set by the responsible engineer under the local codes');
    expect(r.notice).toContain('Missing data is itself an alarm');
    expect(r.notice).toBe(CAUTION); // the one text of --help and the live job's start line
    // The configured thresholds of the rules scoped to this group (config/brannock-mere.yaml, alarms.rules).
    const rules = s.alarms!.rules.filter((x) => x.kind === 'limit' && x.scope.kind === 'groups' && x.scope.group_ids.includes('web-north-pier'));
    expect(r.limits).toHaveLength(rules.reduce((n, x) => n + x.thresholds.length, 0));
    const vm = Math.sqrt(80 * 80 + 80 * 20 + 400 + 3 * 35 * 35); // plane-stress von Mises, common practice
    for (const row of r.limits.filter((l: { quantity: string }) => l.quantity === 'von_mises_MPa')) {
      expect(row.value).toBeCloseTo(vm, 9);
      expect(row.margin).toBeCloseTo(row.limit - vm, 9);
      expect(row.reached).toBe(vm >= row.limit);
    }
    expect(r.limits.some((l: { reached: boolean }) => l.reached)).toBe(true); // 109.9 MPa is past the 55 MPa advisory level
  });

  it('names a runtime file given where the structure file is expected', async () => {
    const { code, err } = await run(['calc', '-c', 'config/brannock-mere.run.yaml', '-g', 'x', '-r', 'a=1', '-t', '1']);
    expect(code).toBe(3);
    expect(err).toContain('this looks like a runtime file: its `structure` names the file "brannock-mere.yaml"');
  });

  it('exits 3 on an invalid configuration and lists its problems', async () => {
    const { code, err } = await run(['calc', '-c', 'test/fixtures/invalid-structure.yaml', '-g', 'x', '-r', 'a=1', '-t', '1']);
    expect(code).toBe(3);
    expect(err).toContain('groups[0].elements[1].angle_deg: expected a number, received string');
  });
});
