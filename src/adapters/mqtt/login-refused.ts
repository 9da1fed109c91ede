/**
 * CONNACK refusals that no retry can cure: the broker does not accept who we say we are, or does
 * not let us in. MQTT 3.1.1 section 3.2.2.3 (return codes 4, 5) and MQTT 5 section 3.2.2.2
 * (reason codes 0x86, 0x87, 0x8A, 0x8C). A configuration error, not a transient fault.
 */
const LOGIN_REFUSALS: Record<4 | 5, ReadonlyMap<number, string>> = {
  4: new Map([[4, 'bad user name or password'], [5, 'not authorised']]),
  5: new Map([[0x86, 'bad user name or password'], [0x87, 'not authorised'], [0x8a, 'banned'], [0x8c, 'bad authentication method']]),
};

/** What a refusal code means when it is a refused login at this protocol level; null otherwise. Pure. */
export function loginRefusal(protocolVersion: 4 | 5, code: number): string | null {
  return LOGIN_REFUSALS[protocolVersion].get(code) ?? null;
}

/** The broker refused the login, at start-up or on a later reconnect. */
export class BrokerLoginRefusedError extends Error {
  constructor(
    readonly url: string,
    readonly username: string | undefined,
    readonly protocolVersion: 4 | 5,
    readonly code: number,
    readonly meaning: string,
  ) {
    super(
      `the broker at ${url} refused the login${username === undefined ? ' (no user name given)' : ` of user "${username}"`}: `
      + `${meaning} (CONNACK code ${code}, MQTT ${protocolVersion === 5 ? '5' : '3.1.1'}). `
      + 'Check mqtt.username, the password (in the environment variable that mqtt.password_env names) and mqtt.url in the runtime file, '
      + 'and the broker\'s password file and ACL for that user.',
    );
    this.name = 'BrokerLoginRefusedError';
  }
}
