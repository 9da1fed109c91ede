/** What the ACL snippet needs. */
export interface AckAclOptions {
  /** Command topic with {structure} filled in, e.g. `strainward/brannock-mere/alarms/ack`. */
  commandTopic: string;
  /** Broker user names of the acknowledgement role (may publish commands). */
  ackUsers: readonly string[];
  /** Broker user of the processor (reads commands, publishes notifications). */
  processorUser: string;
  /** Topic filter the processor publishes alarm messages under, e.g. `strainward/brannock-mere/notify/#`. */
  notifyTopicFilter: string;
}

/**
 * Example Mosquitto `acl_file` snippet: only the ack role may publish to the command topic, the
 * processor may only read it. Once an acl_file is in use the broker denies whatever it does not
 * grant. Pure; the result is text to append to the broker's ACL file.
 */
export function mosquittoAckAcl(o: AckAclOptions): string {
  const bad = [o.processorUser, ...o.ackUsers].find((u) => !/^[A-Za-z0-9._-]+$/.test(u));
  if (bad !== undefined) throw new Error(`broker user name "${bad}" has characters the ACL file cannot hold`);
  const lines = [
    '# strainward: alarm acknowledgement commands',
    `user ${o.processorUser}`,
    `topic read ${o.commandTopic}`,
    `topic write ${o.notifyTopicFilter}`,
    '',
  ];
  for (const u of o.ackUsers) lines.push(`user ${u}`, `topic write ${o.commandTopic}`, `topic read ${o.notifyTopicFilter}`, '');
  return lines.join('\n');
}
