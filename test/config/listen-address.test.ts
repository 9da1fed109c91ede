import { describe, expect, it } from 'vitest';
import { parseListenAddress } from '../../src/config/listen-address.js';
import { parseRuntimeConfig } from '../../src/config/load-runtime.js';

describe('metrics.listen', () => {
  it('takes host:port, IPv6 in brackets, port 0 for any free port', () => {
    expect(parseListenAddress('127.0.0.1:9464')).toEqual({ host: '127.0.0.1', port: 9464 });
    expect(parseListenAddress('[::1]:9464')).toEqual({ host: '::1', port: 9464 });
    expect(parseListenAddress('localhost:0')).toEqual({ host: 'localhost', port: 0 });
    for (const bad of ['9464', '127.0.0.1', '127.0.0.1:65536', '::1:9464', 'http://127.0.0.1:9464', '127.0.0.1:94a4']) expect(parseListenAddress(bad), bad).toBeNull();
  });

  it('defaults to 127.0.0.1:9464; a bad one is refused naming the field and the form expected', () => {
    const base = { schema_version: 1, structure: 's.yaml', mqtt: { url: 'mqtt://127.0.0.1:1883', client_id: 'c' } };
    expect(parseRuntimeConfig({ ...base, metrics: {} }, 'run.yaml').metrics).toEqual({ listen: '127.0.0.1:9464' });
    expect(parseRuntimeConfig(base, 'run.yaml').metrics).toBeUndefined();
    expect(() => parseRuntimeConfig({ ...base, metrics: { listen: '9464' } }, 'run.yaml')).toThrow(/metrics\.listen.*expected host:port, e\.g\. 127\.0\.0\.1:9464.*received "9464"/s);
  });
});
