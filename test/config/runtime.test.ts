import { describe, expect, it } from 'vitest';
import { resolve } from 'node:path';
import { brokerAccess } from '../../src/app/broker-access.js';
import { ConfigError } from '../../src/config/compile.js';
import { parseRuntimeConfig } from '../../src/config/load-runtime.js';

const base = { schema_version: 1, structure: 's.yaml', mqtt: { url: 'mqtts://127.0.0.1:8883', client_id: 'sw' } };
const problems = (doc: unknown): string[] => {
  try {
    parseRuntimeConfig(doc, 'run.yaml');
    return [];
  } catch (e) {
    if (!(e instanceof ConfigError)) throw e;
    return e.problems.map((p) => `${p.path}: ${p.reason}`);
  }
};

describe('runtime configuration: the broker connection', () => {
  it('defaults: presence on, verified TLS when asked, gzip auto, two batches in flight, no element strains', () => {
    const rc = parseRuntimeConfig({ ...base, mqtt: { ...base.mqtt, tls: { ca_file: 'ca.pem' } } }, 'run.yaml');
    expect(rc.presence).toEqual({ topic: 'strainward/{structure}/processor/{client_id}', every_s: 10 });
    expect(rc.mqtt.tls).toEqual({ ca_file: 'ca.pem', reject_unauthorized: true });
    expect(rc.results).toEqual({ element_strains: false });
  });

  it('names the field and the reason for a client certificate without its key', () => {
    expect(problems({ ...base, mqtt: { ...base.mqtt, tls: { cert_file: 'c.pem' } } })).toEqual(['mqtt.tls: cert_file and key_file go together']);
    expect(problems({ ...base, presence: { every_s: 0 } })).toEqual([expect.stringMatching(/^presence\.every_s: /)]);
  });

  it('resolves TLS files against the runtime file and takes the password from the environment it names', () => {
    const rc = parseRuntimeConfig({ ...base, mqtt: { ...base.mqtt, username: 'proc', password_env: 'SW_PW', tls: { ca_file: 'certs/ca.pem', cert_file: '/abs/c.pem', key_file: 'k.pem' } } }, 'run.yaml');
    expect(brokerAccess(rc, '/etc/strainward', { SW_PW: 'secret' })).toEqual({
      url: 'mqtts://127.0.0.1:8883', connectTimeout_ms: 10_000, username: 'proc', password: 'secret',
      tls: { caFile: resolve('/etc/strainward/certs/ca.pem'), certFile: '/abs/c.pem', keyFile: resolve('/etc/strainward/k.pem'), rejectUnauthorized: true },
    });
  });
});

describe('runtime configuration: the retained state topics', () => {
  it('default: group states every 5 s and the open-alarm list, each on its own topic', () => {
    expect(parseRuntimeConfig(base, 'run.yaml').state_topics).toEqual({
      interval_s: 5, groups_topic: 'strainward/{structure}/state/groups/{group}', alarms_topic: 'strainward/{structure}/state/alarms', max_message_bytes: 200_000,
    });
  });

  it('a groups topic without {group} would put every group on one topic: refused with the reason; empty switches it off', () => {
    expect(problems({ ...base, state_topics: { groups_topic: 'strainward/{structure}/state/groups' } }))
      .toEqual(['state_topics.groups_topic: must contain {group} (one retained topic per group), or be empty']);
    expect(problems({ ...base, state_topics: { groups_topic: '', alarms_topic: '' } })).toEqual([]);
    expect(problems({ ...base, state_topics: { interval_s: 0 } })).toEqual([expect.stringMatching(/^state_topics\.interval_s: /)]);
  });
});
