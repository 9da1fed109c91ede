import { Command } from 'commander';
import { z } from 'zod';
import { loadStructureFile } from '../../config/load.js';
import { calculate } from '../../results/calculate.js';
import { renderCalculation } from '../../results/render-calculation.js';
import { parseOptions } from '../options.js';

const reading = z.string().regex(/^[^=]+=(-?[0-9.eE+-]+|null)$/, 'expected id=value (a number, or null for a failed element)');

export const CalcOptionsSchema = z.strictObject({
  config: z.string().min(1),
  group: z.string().min(1),
  reading: z.array(reading).min(1),
  temperature: z.union([z.coerce.number(), z.literal('missing')]),
  companion: z.coerce.number().optional(),
  json: z.boolean().default(false),
});

/** `strainward calc`: one sample of one group, by hand, for commissioning. */
export function calcCommand(): Command {
  return new Command('calc')
    .description('compute one sample of one gauge group by hand and print every intermediate')
    .requiredOption('-c, --config <file>', 'structure configuration (YAML or JSON)')
    .requiredOption('-g, --group <id>', 'gauge group id')
    .requiredOption('-r, --reading <id=value...>', 'raw reading per element, keyed by gauge or channel id, in its signal unit')
    .requiredOption('-t, --temperature <degC>', 'group temperature in degC, or "missing"')
    .option('--companion <value>', 'raw reading of the unstressed companion gauge')
    .option('--json', 'print one JSON object instead of tables')
    .action(async (raw: unknown) => {
      const o = parseOptions(CalcOptionsSchema, raw);
      const structure = await loadStructureFile(o.config);
      const readings: Record<string, number | null> = {};
      for (const r of o.reading) {
        const [id, value] = r.split('=');
        readings[id] = value === 'null' ? null : Number(value);
      }
      const temp = o.temperature === 'missing' ? null : o.temperature;
      const { report } = calculate(structure, o.group, readings, temp, o.companion ?? null);
      process.stdout.write(o.json ? `${JSON.stringify(report)}\n` : `${renderCalculation(report)}\n`);
    });
}
