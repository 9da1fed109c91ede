/**
 * What a user reads first: every command's `--help`, run as a real process (`node bin/strainward.mjs
 * <command> --help`, the simulator's and `npm start`'s too), exits 0 with an example and the caution;
 * and the README's command table lists every command with exit codes that are those of
 * src/cli/errors.ts, whose exit-code table it holds to `EXIT` exactly.
 */
import { execFile } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { promisify } from 'node:util';
import { describe, expect, it } from 'vitest';
import { EXIT } from '../../src/cli/errors.js';
import { COMMANDS as COMMAND_TABLE } from '../../src/cli/main.js';
import { CAUTION } from '../../src/model/caution.js';

const run = promisify(execFile);
const COMMANDS = COMMAND_TABLE.map((c) => c.name);
const flat = (text: string) => text.replace(/\s+/g, ' ');

async function help(args: string[]): Promise<{ code: number; out: string }> {
  const r = await run(process.execPath, [...args, '--help'], { timeout: 60_000 })
    .then((x) => ({ code: 0, out: x.stdout }), (e: { code: number; stdout: string }) => ({ code: e.code, out: e.stdout }));
  return r;
}

describe('--help as a real process', () => {
  it('knows the commands it is checking', () => {
    expect(COMMANDS.sort()).toEqual(['ack', 'alarms', 'broker-acl', 'calc', 'record', 'replay', 'rezero', 'run', 'status', 'validate']);
  });

  const programs: Array<[string, string[]]> = [
    ['strainward', ['bin/strainward.mjs']],
    ...COMMANDS.map((c): [string, string[]] => [`strainward ${c}`, ['bin/strainward.mjs', c]]),
    ['the simulator', ['--import', 'tsx', 'simulators/brannock-mere.ts']],
    ['npm start', ['--import', 'tsx', 'src/demo/start.ts']],
  ];
  for (const [name, args] of programs) {
    it(`${name} --help: exit 0, an example, the caution`, async () => {
      const r = await help(args);
      expect(r.code).toBe(0);
      expect(r.out).toMatch(/^Usage: /);
      expect(r.out).toMatch(/\nExample:\n {2}\S/);
      expect(flat(r.out)).toContain(CAUTION);
    }, 60_000);
  }
});

/** The rows of the first Markdown table after `heading`, cells trimmed (`\|` inside a cell is kept as `|`). */
function tableAfter(markdown: string, heading: string): string[][] {
  const lines = markdown.slice(markdown.indexOf(heading)).split('\n');
  const first = lines.findIndex((l) => l.startsWith('|'));
  const rows: string[][] = [];
  for (const line of lines.slice(first)) {
    if (!line.startsWith('|')) break;
    rows.push(line.slice(1, -1).split(/(?<!\\)\|/).map((c) => c.trim().replaceAll('\\|', '|')));
  }
  return rows.filter((r) => !r.every((c) => /^-+$/.test(c)));
}

describe('README: commands and exit codes', () => {
  const readme = readFileSync('README.md', 'utf8');
  const [commandHeader, ...commandRows] = tableAfter(readme, '## Commands');
  const [codeHeader, ...codeRows] = tableAfter(readme, 'a test holds this table and the');
  const codesOf = (row: string[]) => row[2].split(',').map((c) => Number(c.trim()));

  it('the command table lists every command, calc included, each with its exit codes', () => {
    expect(commandHeader).toEqual(['command', 'what it does', 'exit codes']);
    const listed = commandRows.map((r) => /^`strainward ([a-z-]+)/.exec(r[0])?.[1]).filter((c) => c !== undefined);
    expect(listed.sort()).toEqual([...COMMANDS].sort());
    expect(listed).toContain('calc');
    for (const row of commandRows) expect(row[2], row[0]).toMatch(/^\d+(, \d+)*$/);
  });

  it('the exit-code table is EXIT of src/cli/errors.ts, code for code and name for name', () => {
    expect(codeHeader).toEqual(['code', 'name', 'meaning']);
    expect(codeRows.map((r) => [Number(r[0]), r[1].replaceAll('`', '')])).toEqual(Object.entries(EXIT).map(([name, code]) => [code, name]));
    for (const r of codeRows) expect(r[2], r[1]).not.toBe('');
  });

  it('every code a command lists is one of EXIT; every command may end 0, 1 or 2; every other code is some command\'s', () => {
    const known = new Set<number>(Object.values(EXIT));
    for (const row of commandRows) {
      for (const code of codesOf(row)) expect(known.has(code), `${row[0].slice(0, 40)}: ${code}`).toBe(true);
      expect(codesOf(row).slice(0, 3), row[0].slice(0, 40)).toEqual([EXIT.ok, EXIT.runtime, EXIT.usage]);
    }
    const used = new Set(commandRows.flatMap(codesOf));
    expect([...known].filter((c) => !used.has(c))).toEqual([]);
  });
});
