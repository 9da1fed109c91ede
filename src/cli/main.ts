import { readFileSync } from 'node:fs';
import { Command, CommanderError } from 'commander';
import { ackCommand } from './commands/ack.js';
import { alarmsCommand } from './commands/alarms.js';
import { brokerAclCommand } from './commands/broker-acl.js';
import { calcCommand } from './commands/calc.js';
import { recordCommand } from './commands/record.js';
import { replayCommand } from './commands/replay.js';
import { runCommand } from './commands/run.js';
import { statusCommand } from './commands/status.js';
import { EXIT, exitCodeFor } from './errors.js';
import { CAUTION, EXAMPLES, wrap } from './help-text.js';

const VERSION = (JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version: string }).version;

/** Commander outcomes that are not errors: help or the version asked for. */
const ANSWERED = new Set(['commander.helpDisplayed', 'commander.version']);

/** The command tree, every command with the caution and an example in its help. */
export function buildProgram(): Command {
  const program = new Command('strainward')
    .description('strain-gauge readings to temperature-compensated stresses, principal values and alarms')
    .version(VERSION, '-V, --version', 'print the version and exit')
    .addHelpText('after', `\nExample:\n  strainward calc --help\n\n${wrap(CAUTION)}`)
    .addCommand(calcCommand())
    .addCommand(runCommand())
    .addCommand(ackCommand())
    .addCommand(recordCommand())
    .addCommand(replayCommand())
    .addCommand(statusCommand())
    .addCommand(alarmsCommand())
    .addCommand(brokerAclCommand());
  const prepare = (cmd: Command): void => {
    // Every command (addCommand copies no settings): errors come back here, never process.exit.
    cmd.exitOverride().showSuggestionAfterError(true);
    if (cmd !== program) {
      // A command that brings its own example keeps it.
      if ((cmd as unknown as NodeJS.EventEmitter).listenerCount('afterHelp') === 0 && EXAMPLES[cmd.name()] !== undefined) cmd.addHelpText('after', `\nExample:\n  ${EXAMPLES[cmd.name()]}`);
      cmd.addHelpText('after', `\n${wrap(CAUTION)}`);
    }
    cmd.commands.forEach(prepare);
  };
  prepare(program);
  return program;
}

/** Composition root of the command line: commands are wired here; errors become exit codes here only. */
export async function main(argv: string[]): Promise<number> {
  const program = buildProgram();
  try {
    await program.parseAsync(argv);
    return EXIT.ok;
  } catch (err) {
    // Commander has already printed its message (unknown option, missing value...): bad usage, exit 2.
    if (err instanceof CommanderError) return ANSWERED.has(err.code) ? EXIT.ok : EXIT.usage;
    const e = err as { message?: string };
    process.stderr.write(`strainward: ${e.message ?? String(err)}\n`);
    return exitCodeFor(err);
  }
}
