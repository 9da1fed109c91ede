import { describe, expect, it } from 'vitest';
import { compileStructure } from '../../src/config/compile.js';
import { planeRosetteDoc } from '../support/structures.js';

/** The structure file's `alarms` section: a configuration, `{ disabled: true }`, or absent (which the live job refuses). */
const compile = (alarms: unknown) => compileStructure(alarms === undefined ? planeRosetteDoc([0, 45, 90]) : { ...planeRosetteDoc([0, 45, 90]), alarms });

describe('alarms section', () => {
  it('absent: no alarms and not disabled (run refuses it); { disabled: true }: no alarms, disabled on purpose', () => {
    const absent = compile(undefined);
    const off = compile({ disabled: true });
    expect(absent.ok && { alarms: absent.structure.alarms, disabled: absent.structure.alarmsDisabled }).toEqual({ alarms: null, disabled: false });
    expect(off.ok && { alarms: off.structure.alarms, disabled: off.structure.alarmsDisabled }).toEqual({ alarms: null, disabled: true });
  });

  it('a configured section with disabled: false is on', () => {
    const on = compile({ disabled: false, levels: ['alert'], health: { level: 'alert' }, acknowledgement: { allowed_users: { structural: ['eng'] } } });
    expect(on.ok, on.ok ? '' : JSON.stringify(on.problems)).toBe(true);
    expect(on.ok && on.structure.alarms?.levels).toEqual(['alert']);
    expect(on.ok && on.structure.alarmsDisabled).toBe(false);
  });

  it('refuses disabled with other keys, and a disabled that is not true or false, naming the field', () => {
    expect(compile({ disabled: true, levels: ['alert'] })).toEqual({ ok: false, problems: [{
      path: 'alarms', reason: 'disabled: true switches every alarm off and takes no other key (found "levels"): remove disabled, or the rest',
    }] });
    expect(compile({ disabled: 'yes' })).toEqual({ ok: false, problems: [{ path: 'alarms.disabled', reason: 'unknown disabled, expected one of true, false' }] });
  });
});
