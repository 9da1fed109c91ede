import { z } from 'zod';
import { IdSchema } from '../config/material-schema.js';

/**
 * A cluster file: which work units exist and how processors share them through etcd leases.
 * A unit is one structure, or the part of a structure read by a set of loggers; each unit is one
 * persistent MQTT session (its own client id) held by exactly one processor at a time.
 */
export const UnitSplitSchema = z.strictObject({
  /** Unit id, unique within its structure: the client id becomes `<runtime client_id>-<id>`. */
  id: IdSchema,
  /** The loggers this unit subscribes to. Every group's loggers (strain, companion, temperature) must be in one unit. */
  loggers: z.array(IdSchema).min(1),
});

export const ClusterUnitsEntrySchema = z.strictObject({
  /** A runtime file (relative to the cluster file): its broker, database and structure. */
  runtime: z.string().min(1),
  /** Absent: the whole structure is one unit. */
  split: z.array(UnitSplitSchema).min(1).optional(),
});

export const ClusterConfigSchema = z.strictObject({
  schema_version: z.literal(1),
  cluster: z.strictObject({
    /** Name of this cluster: the etcd key prefix is `strainward/<name>/`. */
    name: IdSchema,
    etcd: z.strictObject({
      /** etcd client URLs, e.g. http://127.0.0.1:2379 (all members). */
      endpoints: z.array(z.string().regex(/^https?:\/\/[^/]+$/, 'expected http://host:port')).min(1),
      /**
       * Lease time to live, seconds. A killed holder's units are free this long after its last
       * keep-alive; a holder that has not renewed for two thirds of it drops its units itself.
       */
      lease_ttl_s: z.number().int().min(1).max(300).default(2),
    }),
    /** Most units one processor holds at once (the fair share is the smaller of this and units / processors, rounded up). */
    max_units_per_processor: z.number().int().min(1).default(64),
    /**
     * Folder every processor reaches (a shared volume): each unit's alarm state, alarm log, dead
     * letters, spool, capture and line-protocol files live in `<shared_dir>/<structure>/<unit>/`,
     * where the next holder finds them.
     */
    shared_dir: z.string().min(1),
    /** How often holdings are reconciled with the fair share (and free units looked for). */
    reconcile_every_ms: z.number().int().min(50).default(500),
  }),
  units: z.array(ClusterUnitsEntrySchema).min(1),
});

export type ClusterConfig = z.infer<typeof ClusterConfigSchema>;
export type UnitSplit = z.infer<typeof UnitSplitSchema>;
