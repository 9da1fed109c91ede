import { Command } from 'commander';
import { z } from 'zod';
import { loadStructureFile } from '../../config/load.js';
import { calculate } from '../../results/calculate.js';
import { renderCalculation, SAFETY_NOTICE } from '../../results/render-calculation.js';
import { UsageError } from '../errors.js';
import { parseOptions } from '../options.js';

/** `id=value`, split at the last `=` (ids may hold one); the value a finite number or `null`. */
const reading = z.string().transform((text, ctx) => {
  const at = text.lastIndexOf('=');
  const id = at > 0 ? text.slice(0, at) : '';
  const value = text.slice(at + 1).trim();
  const number = Number(value);
  if (at <= 0 || (value !== 'null' && (value === '' || !Number.isFinite(number)))) {
    ctx.addIssue({ code: 'custom', message: `expected id=value (a number, or null for a failed element), received "${text}"` });
    return z.NEVER;
  }
  return { id, value: value === 'null' ? null : number };
});

/** A bare number in the option's unit: a unit suffix (`31.5C`) is refused with the form expected. */
const plainNumber = (what: string) => z.string().trim().refine((t) => t !== '' && Number.isFinite(Number(t)), {
  error: (issue) => `expected ${what}, received "${String(issue.input)}"`,
}).transform(Number);

export const CalcOptionsSchema = z.strictObject({
  config: z.string().min(1),
  group: z.string().min(1),
  reading: z.array(reading).min(1),
  temperature: z.union([z.literal('missing'), plainNumber('degC as a plain number (e.g. 31.5 or -4, no unit), or "missing"')],
    { error: (issue) => `expected degC as a plain number (e.g. 31.5 or -4, no unit), or "missing", received "${String(issue.input)}"` }),
  companion: plainNumber('the companion gauge\'s raw reading as a plain number in its signal unit').optional(),
  json: z.boolean().default(false),
});

/** `strainward calc`: one sample of one group, by hand, for commissioning. */
export function calcCommand(): Command {
  return new Command('calc')
    .description('compute one sample of one gauge group by hand and print every intermediate')
    .requiredOption('-c, --config <file>', 'structure configuration (YAML or JSON)')
    .requiredOption('-g, --group <id>', 'gauge group id')
    .requiredOption('-r, --reading <id=value...>', 'raw reading per element, keyed by gauge id, channel id or logger/channel, in its signal unit (null: a failed element)')
    .requiredOption('-t, --temperature <degC>', 'group temperature in degC as a plain number (no unit), or "missing"')
    .option('--companion <value>', 'raw reading of the unstressed companion gauge')
    .option('--json', 'print one JSON object instead of tables')
    .action(async (raw: unknown) => {
      const o = parseOptions(CalcOptionsSchema, raw);
      const structure = await loadStructureFile(o.config);
      const readings: Record<string, number | null> = {};
      for (const r of o.reading) {
        if (r.id in readings) throw new UsageError(`--reading: "${r.id}" given twice`);
        readings[r.id] = r.value;
      }
      const temp = o.temperature === 'missing' ? null : o.temperature;
      const { report } = calculate(structure, o.group, readings, temp, o.companion ?? null);
      process.stdout.write(o.json ? `${JSON.stringify({ ...report, notice: SAFETY_NOTICE })}\n` : `${renderCalculation(report)}\n`);
    });
}
