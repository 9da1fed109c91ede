import { z } from 'zod';
import { FAULT_KINDS, type FaultKind } from './scenario.js';

/** `--faults`: a comma list of fault kinds, or `all` / `none`. */
export const FaultListSchema = z.string().transform((s, ctx): FaultKind[] => {
  if (s === 'all') return [...FAULT_KINDS];
  if (s === 'none' || s === '') return [];
  const kinds = s.split(',').map((k) => k.trim());
  for (const k of kinds) {
    if (!(FAULT_KINDS as readonly string[]).includes(k)) {
      ctx.addIssue({ code: 'custom', message: `unknown fault "${k}"; choose from ${FAULT_KINDS.join(', ')}, all, none` });
    }
  }
  return kinds as FaultKind[];
});

/** Options of simulators/brannock-mere.ts after commander (camel-cased, strings); zod checks and converts them. */
export const CliOptionsSchema = z.strictObject({
  config: z.string().min(1),
  seed: z.coerce.number().int(),
  /** ISO 8601 with zone, or `now` (whole seconds) for a live run whose logger clocks must agree with the processor's. */
  start: z.union([z.literal('now'), z.iso.datetime({ offset: true })]).transform((s) => (s === 'now' ? Math.ceil(Date.now() / 1000) * 1000 : Date.parse(s))),
  durationS: z.coerce.number().positive(),
  dayS: z.coerce.number().positive(),
  rateFactor: z.coerce.number().positive(),
  speed: z.coerce.number().min(0),
  faults: FaultListSchema,
  noise: z.boolean(),
  broker: z.url({ protocol: /^mqtts?$|^wss?$/ }).optional(),
  captureDir: z.string().min(1).optional(),
  messages: z.boolean(),
  out: z.string().min(1),
});
export type CliOptions = z.infer<typeof CliOptionsSchema>;

