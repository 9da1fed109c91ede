import { Command } from 'commander';
import { z } from 'zod';
import { brokerAclFor } from '../../app/broker-acl.js';
import { loadRuntimeFile } from '../../config/load-runtime.js';
import { parseOptions } from '../options.js';

export const BrokerAclOptionsSchema = z.strictObject({
  config: z.string().min(1),
  viewer: z.array(z.string().min(1)).default([]),
});

/** The Mosquitto ACL text for a runtime file's structure (see app/broker-acl.ts for the login conventions). */
export async function brokerAclText(raw: unknown): Promise<string> {
  const o = parseOptions(BrokerAclOptionsSchema, raw);
  return brokerAclFor(await loadRuntimeFile(o.config), { viewers: o.viewer });
}

/** `strainward broker-acl`: print the broker ACL every role of the live job needs. */
export function brokerAclCommand(): Command {
  return new Command('broker-acl')
    .description('print a Mosquitto acl_file for the structure: processor, loggers, crews, acknowledgers, rezero users, read-only viewers')
    .requiredOption('-c, --config <file>', 'runtime configuration (YAML or JSON) naming the structure file')
    .option('--viewer <login...>', 'read-only logins (dashboards, operators running status)')
    .addHelpText('after', '\nExample:\n  strainward broker-acl -c config/brannock-mere.run.yaml --viewer control-room-display > /etc/mosquitto/strainward.acl')
    .action(async (raw: unknown) => {
      process.stdout.write(await brokerAclText(raw));
    });
}
