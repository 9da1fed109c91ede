/**
 * A complete Mosquitto `acl_file` for one structure, by role. Once an acl_file is in use the broker
 * denies whatever it does not grant, so every role the live job needs is here: the processor,
 * the loggers, the crews that read alarm messages, the people who acknowledge, read-only viewers.
 * Identity for acknowledgements comes from the broker: each acknowledging login may publish only
 * on its own command topic, and the processor takes the user from the topic. Logins that do not
 * acknowledge cannot publish a command at all (the processor's own check refuses them too).
 */
export interface BrokerAclOptions {
  /** Broker login of the processor. */
  processorUser: string;
  /** The topic each logger login publishes its scans on (login -> topic). */
  loggers: Readonly<Record<string, string>>;
  /** Processor presence topic filter, e.g. `strainward/deck/processor/+` (processor writes, others read); null when off. */
  presenceFilter: string | null;
  /** Dead-letter topic (processor writes, the instrumentation role reads), or null when off. */
  deadLetterTopic: string | null;
  /** Alarm message topic filters (`{zone}`, `{level}` as `+`): processor writes. */
  notifyFilters: readonly string[];
  /** Command topic with `%u` for the login, e.g. `strainward/deck/alarms/ack/%u`. */
  ackPattern: string;
  /** Verdict topic with `%u`, e.g. `strainward/deck/alarms/ack-verdict/%u`. */
  verdictPattern: string;
  /** Crew logins and the alarm topic filters each may read. */
  crews: Readonly<Record<string, readonly string[]>>;
  /** Logins that acknowledge (they also read every alarm topic and the presence). */
  acknowledgers: readonly string[];
  /** Read-only logins: alarm topics and presence, nothing to write. */
  viewers: readonly string[];
  /** Further topic filters the processor publishes (e.g. the current-state topics), processor writes, viewers read. */
  stateFilters?: readonly string[];
  /** Rezero request and verdict topics with `%u` (same identity scheme as acknowledgements), and the logins that may rezero. */
  rezero?: { requestPattern: string; verdictPattern: string; users: readonly string[] };
}

const LOGIN = /^[A-Za-z0-9._-]+$/;

/** The ACL text (pure). Throws when a login has characters an ACL line cannot hold. */
export function mosquittoAcl(o: BrokerAclOptions): string {
  const rezeroUsers = o.rezero?.users ?? [];
  const logins = [o.processorUser, ...Object.keys(o.loggers), ...Object.keys(o.crews), ...o.acknowledgers, ...o.viewers, ...rezeroUsers];
  const bad = logins.find((u) => !LOGIN.test(u));
  if (bad !== undefined) throw new Error(`broker user name "${bad}" has characters the ACL file cannot hold`);
  const anyLogin = (pattern: string) => pattern.replaceAll('%u', '+');
  const state = o.stateFilters ?? [];
  const lines: string[] = [
    '# strainward broker ACL (generated): every role the live job needs; the broker denies the rest.',
    '# An acknowledging login may publish only on its own command topic and read only its own verdicts:',
    '# the processor takes the acknowledging user from the topic, so nobody can sign as someone else.',
    '',
    '# The processor: scans and commands in; presence, alarms, verdicts, dead letters, state out.',
    `user ${o.processorUser}`,
    ...[...new Set(Object.values(o.loggers))].map((t) => `topic read ${t}`),
    `topic read ${anyLogin(o.ackPattern)}`,
    `topic write ${anyLogin(o.verdictPattern)}`,
    ...(o.presenceFilter === null ? [] : [`topic readwrite ${o.presenceFilter}`]),
    ...o.notifyFilters.map((f) => `topic write ${f}`),
    ...(o.deadLetterTopic === null ? [] : [`topic write ${o.deadLetterTopic}`]),
    ...state.map((f) => `topic write ${f}`),
    ...(o.rezero === undefined ? [] : [`topic read ${anyLogin(o.rezero.requestPattern)}`, `topic write ${anyLogin(o.rezero.verdictPattern)}`]),
    '',
  ];
  for (const [login, topic] of Object.entries(o.loggers)) lines.push(`# logger`, `user ${login}`, `topic write ${topic}`, '');
  for (const [login, filters] of Object.entries(o.crews)) lines.push('# crew', `user ${login}`, ...filters.map((f) => `topic read ${f}`), '');
  const readAll = [...o.notifyFilters.map((f) => `topic read ${f}`), ...(o.presenceFilter === null ? [] : [`topic read ${o.presenceFilter}`]), ...state.map((f) => `topic read ${f}`)];
  const own = (pattern: string, login: string) => pattern.replaceAll('%u', login);
  const rezeroLines = (login: string) => (o.rezero === undefined || !rezeroUsers.includes(login) ? []
    : [`topic write ${own(o.rezero.requestPattern, login)}`, `topic read ${own(o.rezero.verdictPattern, login)}`]);
  for (const login of o.acknowledgers) {
    lines.push(
      `# acknowledges alarms (which classes: alarms.acknowledgement.allowed_users)${rezeroUsers.includes(login) ? ' and rezeroes groups (which: rezero.allowed)' : ''}`, `user ${login}`,
      `topic write ${own(o.ackPattern, login)}`, `topic read ${own(o.verdictPattern, login)}`, ...rezeroLines(login), ...readAll, '',
    );
  }
  for (const login of rezeroUsers.filter((u, i) => !o.acknowledgers.includes(u) && rezeroUsers.indexOf(u) === i)) {
    lines.push('# rezeroes groups (which: rezero.allowed)', `user ${login}`, ...rezeroLines(login), ...readAll, '');
  }
  for (const login of o.viewers) {
    lines.push('# read-only viewer', `user ${login}`, ...readAll, ...(o.deadLetterTopic === null ? [] : [`topic read ${o.deadLetterTopic}`]), '');
  }
  return lines.join('\n');
}
