/**
 * Start-up stays short (npm run bench:startup measures it): the command line names every command
 * without loading it, and the browser driver is loaded only when a PDF is printed.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it, vi } from 'vitest';
import { COMMANDS } from '../../src/cli/main.js';
import { runCli } from '../support/cli-in-process.js';

const run = runCli;

describe('commands loaded when used', () => {
  it('main.ts imports no command module statically', () => {
    const text = readFileSync('src/cli/main.ts', 'utf8');
    expect([...text.matchAll(/^import .* from '([^']+)'/gm)].map((m) => m[1]).filter((s) => s.includes('/commands/'))).toEqual([]);
  });

  it('each listed command is the module it loads, with the same name and description', async () => {
    expect(COMMANDS.map((c) => c.name)).toEqual(readdirSync('src/cli/commands').map((f) => f.replace(/\.ts$/, '')).sort((a, b) => COMMANDS.findIndex((c) => c.name === a) - COMMANDS.findIndex((c) => c.name === b)));
    for (const c of COMMANDS) {
      const loaded = await c.load();
      expect(loaded.name()).toBe(c.name);
      expect(loaded.description()).toBe(c.description);
    }
  });

  it('--help lists every command; help <command> and <command> --help show its own options', async () => {
    const top = await run(['--help']);
    expect(top.code).toBe(0);
    for (const c of COMMANDS) expect(top.out).toContain(c.name);
    const viaHelp = await run(['help', 'calc']);
    const viaOption = await run(['calc', '--help']);
    expect(viaHelp.code).toBe(0);
    expect(viaOption.code).toBe(0);
    expect(viaHelp.out).toContain('--temperature <degC>');
    expect(viaOption.out).toBe(viaHelp.out);
  });

  it('an unknown command is bad usage (exit 2)', async () => {
    const e = vi.spyOn(process.stderr, 'write').mockImplementation(() => true);
    try {
      expect((await run(['calk'])).code).toBe(2);
    } finally {
      e.mockRestore();
    }
  });

  it('playwright-core is imported in one place only, and there only when a PDF is printed (dynamic import)', () => {
    const importers: string[] = [];
    for (const entry of readdirSync('src', { recursive: true, withFileTypes: true })) {
      if (!entry.isFile() || !entry.name.endsWith('.ts')) continue;
      const path = join(entry.parentPath, entry.name);
      const text = readFileSync(path, 'utf8');
      if (/from 'playwright-core'/.test(text)) importers.push(`${path} (static)`);
      else if (/import\('playwright-core'\)/.test(text)) importers.push(path);
    }
    expect(importers).toEqual([join('src', 'adapters', 'pdf', 'html-to-pdf.ts')]);
  });
});
