import { readFile, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { parse, stringify } from 'yaml';
import { writeRuntimeFile } from './runtime-file.js';

/**
 * Writes `<dir>/structure.yaml`: the example structure (config/brannock-mere.yaml) for tests that
 * count alarms, without what would raise alarms the test did not cause: no webhook channels
 * (nothing listens on their ports during a test) and no no-data or missing-channel checks (the
 * loggers a test does not drive fall silent as the test runs). Returns its path.
 */
export async function writeQuietStructure(dir: string): Promise<string> {
  const doc = parse(await readFile('config/brannock-mere.yaml', 'utf8'), { merge: true });
  for (const r of doc.alarms.recipients) r.channels = r.channels.filter((c: { kind: string }) => c.kind !== 'webhook');
  doc.alarms.health.no_data = { ...doc.alarms.health.no_data, enabled: false };
  doc.alarms.health.channel_missing = { ...doc.alarms.health.channel_missing, enabled: false };
  const path = join(dir, 'structure.yaml');
  await writeFile(path, stringify(doc));
  return path;
}

/** `writeRuntimeFile` for the quiet copy of the example structure (written beside it). */
export async function writeQuietRuntimeFile(dir: string, brokerUrl: string, clientId: string, sections: string[] = []): Promise<string> {
  const structure = await writeQuietStructure(dir);
  const path = await writeRuntimeFile(dir, brokerUrl, clientId, sections);
  const text = await readFile(path, 'utf8');
  await writeFile(path, text.replace(/^structure: .*$/m, `structure: ${structure}`));
  return path;
}
