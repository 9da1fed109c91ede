import { z } from 'zod';
import { isLoopbackHost } from '../src/adapters/http/page-access.js';
import type { FaultTimes } from './default-scenario.js';
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

/** `--heavy-at-s`: comma list of seconds from the start, or `none`. */
export const SecondsListSchema = z.string().transform((s, ctx): number[] => {
  if (s === 'none' || s === '') return [];
  return s.split(',').map((part) => {
    const v = Number(part.trim());
    if (!Number.isFinite(v) || v < 0) ctx.addIssue({ code: 'custom', message: `"${part}" is not a number of seconds (0 or more)` });
    return v;
  });
});

/** `--fault-at`: comma list of `kind@start_s` or `kind@start_s-end_s`, e.g. `dropout@240-270,silent@480`. */
export const FaultTimesSchema = z.string().transform((s, ctx): FaultTimes => {
  const out: FaultTimes = {};
  for (const part of s.split(',').map((p) => p.trim()).filter((p) => p !== '')) {
    const m = /^([a-z_]+)@(\d+(?:\.\d+)?)(?:-(\d+(?:\.\d+)?))?$/.exec(part);
    if (m === null || !(FAULT_KINDS as readonly string[]).includes(m[1])) {
      ctx.addIssue({ code: 'custom', message: `"${part}": expected kind@start_s[-end_s] with kind one of ${FAULT_KINDS.join(', ')}` });
      continue;
    }
    const start_s = Number(m[2]);
    const end_s = m[3] === undefined ? undefined : Number(m[3]);
    if (end_s !== undefined && end_s <= start_s) ctx.addIssue({ code: 'custom', message: `"${part}": the end must come after the start` });
    out[m[1] as FaultKind] = end_s === undefined ? { start_s } : { start_s, end_s };
  }
  return out;
});

/** Options of simulators/brannock-mere.ts after commander (camel-cased, strings); zod checks and converts them. */
/** `--broker`: one broker URL, or a comma list of the nodes of one clustered broker. */
export const BrokerListSchema = z.string().transform((s) => s.split(',').map((u) => u.trim()).filter((u) => u !== ''))
  .pipe(z.array(z.url({ protocol: /^mqtts?$|^wss?$/ })).min(1, 'expected a broker URL or a comma list of them'));

export const CliOptionsSchema = z.strictObject({
  /** One structure file or several (repeated `--config`), each published as its own structure. */
  config: z.union([z.string().min(1).transform((c) => [c]), z.array(z.string().min(1)).min(1)]),
  seed: z.coerce.number().int(),
  /** ISO 8601 with zone, or `now` (whole seconds) for a live run whose logger clocks must agree with the processor's. */
  start: z.union([z.literal('now'), z.iso.datetime({ offset: true })]).transform((s) => (s === 'now' ? Math.ceil(Date.now() / 1000) * 1000 : Date.parse(s))),
  durationS: z.coerce.number().positive(),
  dayS: z.coerce.number().positive(),
  rateFactor: z.coerce.number().positive(),
  speed: z.coerce.number().min(0),
  faults: FaultListSchema,
  heavyAtS: SecondsListSchema.optional(),
  faultAt: FaultTimesSchema.optional(),
  noise: z.boolean(),
  broker: BrokerListSchema.optional(),
  /** How long one connection attempt may take (a clustered broker taking over a lost node's sessions needs seconds). */
  connectTimeoutMs: z.coerce.number().int().min(100).default(10_000),
  clientId: z.string().min(1).default('strainward-simulator'),
  /** NDJSON of every publish the broker confirmed (PUBACK): `{structure, logger, seq, logger_ts_ms}`. */
  publishedLog: z.string().min(1).optional(),
  /** Publishing to a broker beyond this machine needs saying so: see `remoteBrokerProblem`. */
  allowRemoteBroker: z.boolean().default(false),
  captureDir: z.string().min(1).optional(),
  messages: z.boolean(),
  out: z.string().min(1),
}).superRefine((o, ctx) => {
  for (const url of o.broker ?? []) {
    const problem = remoteBrokerProblem(url, o.allowRemoteBroker);
    if (problem !== null) ctx.addIssue({ code: 'custom', path: ['broker'], message: problem });
  }
  if (o.publishedLog !== undefined && o.broker === undefined) ctx.addIssue({ code: 'custom', path: ['publishedLog'], message: 'records what a broker confirmed: give --broker too' });
});
export type CliOptions = z.infer<typeof CliOptionsSchema>;


/**
 * Simulated readings published on a real structure's broker could fake or hide its alarms, so the
 * simulator publishes to loopback (127.0.0.0/8, ::1, localhost) only, unless `--allow-remote-broker`
 * says otherwise. Null when allowed; the refusal otherwise.
 */
export function remoteBrokerProblem(brokerUrl: string, allowRemote: boolean): string | null {
  const host = new URL(brokerUrl).hostname;
  if (allowRemote || isLoopbackHost(host)) return null;
  return `${brokerUrl} is not on this machine (loopback): simulated readings there could fake or hide a real structure's alarms; `
    + 'use a broker on 127.0.0.1, or give --allow-remote-broker if this broker serves no real structure';
}
