import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';

const root = join(import.meta.dirname, '../../../src/alarms');
const pure = [
  ...readdirSync(join(root, 'engine')).map((f) => `engine/${f}`),
  'routing/select.ts', 'routing/match.ts', 'routing/format.ts', 'routing/points.ts',
  'schema.ts', 'schema-rules.ts', 'schema-health.ts', 'schema-routing.ts', 'ack.ts', 'acl.ts', 'operator.ts', 'types.ts', 'units.ts',
];

describe('alarm core purity', () => {
  it.each(pure)('%s reads no wall clock', (f) => {
    expect(readFileSync(join(root, f), 'utf8')).not.toMatch(/Date\.now|performance\.now|new Date\(\)/);
  });
  it.each(pure.filter((f) => f.startsWith('engine/')))('%s imports no I/O, RxJS or adapters', (f) => {
    const imports = [...readFileSync(join(root, f), 'utf8').matchAll(/from '([^']+)'/g)].map((m) => m[1]);
    for (const i of imports) expect(i).toMatch(/^(\.\.?\/|zod$)/);
    for (const i of imports) expect(i).not.toMatch(/adapters|node:|rxjs|persistence|delivery|alarm-log/);
  });
});
