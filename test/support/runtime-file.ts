import { writeFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';

/**
 * Writes `<dir>/run.yaml`, a runtime file for the example structure (config/brannock-mere.yaml)
 * with the given broker and client id; `sections` are further YAML lines (flow style). Returns its path.
 */
export async function writeRuntimeFile(dir: string, brokerUrl: string, clientId: string, sections: string[] = []): Promise<string> {
  const path = join(dir, 'run.yaml');
  await writeFile(path, [
    'schema_version: 1',
    `structure: ${resolve('config/brannock-mere.yaml')}`,
    `mqtt: { url: "${brokerUrl}", client_id: ${clientId} }`,
    ...sections,
  ].join('\n'));
  return path;
}

/** Runtime sections that keep every file the live job writes under `dir` (results, dead letters, alarms, fatigue). */
export function filesUnder(dir: string): string[] {
  return [
    `line_protocol: { dir: ${join(dir, 'lp')} }`,
    `dead_letters: { file: ${join(dir, 'dl.ndjson')} }`,
    `alarms: { state_file: ${join(dir, 'alarm-state.json')}, log_file: ${join(dir, 'alarms.ndjson')} }`,
    `fatigue: { state_file: ${join(dir, 'fatigue-state.json')} }`,
  ];
}
