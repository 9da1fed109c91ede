import { readFileSync } from 'node:fs';
import { Command, CommanderError } from 'commander';
import { EXIT } from './exit-codes.js';
import { CAUTION, EXAMPLES, wrap } from './help-text.js';

const VERSION = (JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version: string }).version;

/** Commander outcomes that are not errors: help or the version asked for. */
const ANSWERED = new Set(['commander.helpDisplayed', 'commander.version']);

/**
 * Every command, in the order of the help, with its one-line description (the same as the
 * command's own, tested) and its module, loaded only when that command runs or shows its help:
 * `--help` and `calc` then start without the broker client, the database client or the browser.
 */
export const COMMANDS: ReadonlyArray<{ name: string; description: string; load: () => Promise<Command> }> = [
  { name: 'calc', description: 'compute one sample of one gauge group by hand and print every intermediate', load: async () => (await import('./commands/calc.js')).calcCommand() },
  { name: 'run', description: 'process live readings from the broker into the database (or line-protocol files)', load: async () => (await import('./commands/run.js')).runCommand() },
  { name: 'ack', description: 'acknowledge an alarm: publish the command the running processor listens for', load: async () => (await import('./commands/ack.js')).ackCommand() },
  { name: 'record', description: 'record every message of the structure\'s topics to a raw capture, without processing', load: async () => (await import('./commands/record.js')).recordCommand() },
  { name: 'replay', description: 'feed a raw capture through exactly the live pipeline, with the same or a corrected configuration', load: async () => (await import('./commands/replay.js')).replayCommand() },
  { name: 'status', description: 'check on the broker that the structure\'s processors are online and recent (exit 4 when not, 9 when the broker cannot be reached), with their database, spool, dead letters, open alarms and component faults', load: async () => (await import('./commands/status.js')).statusCommand() },
  { name: 'alarms', description: 'list the open alarms from the broker\'s retained list (exit 4 when none is retained or its processor is silent, 9 when the broker cannot be reached)', load: async () => (await import('./commands/alarms.js')).alarmsCommand() },
  { name: 'broker-acl', description: 'print a Mosquitto acl_file for the structure: processor, loggers, crews, acknowledgers, rezero users, read-only viewers', load: async () => (await import('./commands/broker-acl.js')).brokerAclCommand() },
  { name: 'validate', description: 'check a structure or runtime file (which one, from its keys) and print what would be monitored; exit 3 naming every bad field', load: async () => (await import('./commands/validate.js')).validateCommand() },
  { name: 'rezero', description: 'take a group\'s current readings as its new zero: the running processor decides, applies, keeps an audit record and answers', load: async () => (await import('./commands/rezero.js')).rezeroCommand() },
];

/** The command `argv` asks for (`strainward <name> ...` or `strainward help <name>`), if any. */
function requestedCommand(argv: string[]): string | undefined {
  const words = argv.slice(2).filter((a) => !a.startsWith('-'));
  return words[0] === 'help' ? words[1] : words[0];
}

/** The command tree for `argv`: the asked-for command loaded, the others named and described only. */
export async function buildProgram(argv: string[]): Promise<Command> {
  const asked = requestedCommand(argv);
  const program = new Command('strainward')
    .description('strain-gauge readings to temperature-compensated stresses, principal values and alarms')
    .version(VERSION, '-V, --version', 'print the version and exit')
    .addHelpText('after', `\nExample:\n  strainward calc --help\n\n${wrap(CAUTION)}`);
  for (const c of COMMANDS) program.addCommand(c.name === asked ? await c.load() : new Command(c.name).description(c.description));
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
  try {
    const program = await buildProgram(argv);
    await program.parseAsync(argv);
    return EXIT.ok;
  } catch (err) {
    // Commander has already printed its message (unknown option, missing value...): bad usage, exit 2.
    // `help <command>` ends as `commander.help` with exit code 0 (1 when help stands in for an error).
    if (err instanceof CommanderError) return ANSWERED.has(err.code) || (err.code === 'commander.help' && err.exitCode === 0) ? EXIT.ok : EXIT.usage;
    const e = err as { message?: string };
    process.stderr.write(`strainward: ${e.message ?? String(err)}\n`);
    // Loaded only now: telling the errors apart needs the modules that define them.
    const { exitCodeFor } = await import('./errors.js');
    return exitCodeFor(err);
  }
}
