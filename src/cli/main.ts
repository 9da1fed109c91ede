import { Command } from 'commander';
import { ackCommand } from './commands/ack.js';
import { brokerAclCommand } from './commands/broker-acl.js';
import { calcCommand } from './commands/calc.js';
import { recordCommand } from './commands/record.js';
import { replayCommand } from './commands/replay.js';
import { runCommand } from './commands/run.js';
import { statusCommand } from './commands/status.js';
import { exitCodeFor } from './errors.js';

/** Composition root of the command line: commands are wired here; errors become exit codes here only. */
export async function main(argv: string[]): Promise<number> {
  const program = new Command('strainward')
    .description('strain-gauge readings to temperature-compensated stresses, principal values and alarms')
    .exitOverride()
    .addCommand(calcCommand())
    .addCommand(runCommand())
    .addCommand(ackCommand())
    .addCommand(recordCommand())
    .addCommand(replayCommand())
    .addCommand(statusCommand())
    .addCommand(brokerAclCommand());
  try {
    await program.parseAsync(argv);
    return 0;
  } catch (err) {
    const e = err as { code?: string; exitCode?: number; message?: string };
    if (typeof e.code === 'string' && e.code.startsWith('commander.')) return e.exitCode ?? 2;
    process.stderr.write(`strainward: ${e.message ?? String(err)}\n`);
    return exitCodeFor(err);
  }
}
