import { describe, expect, it } from 'vitest';
import { gzipThreshold } from '../../src/app/sinks.js';

describe('gzipThreshold: compression of database writes', () => {
  it('auto: none for a database on this machine, the configured threshold for any other host', () => {
    for (const url of ['http://127.0.0.1:8428', 'http://localhost:8086', 'http://[::1]:8428', 'http://127.3.2.1:1']) {
      expect(gzipThreshold('auto', 1000, url), url).toBe(Number.MAX_SAFE_INTEGER);
    }
    for (const url of ['http://10.0.0.7:8428', 'https://tsdb.example.invalid', 'http://128.0.0.1:8086']) {
      expect(gzipThreshold('auto', 1000, url), url).toBe(1000);
    }
  });

  it('always and never override the host', () => {
    expect(gzipThreshold('always', 500, 'http://127.0.0.1:8428')).toBe(500);
    expect(gzipThreshold('never', 500, 'http://10.0.0.7:8428')).toBe(Number.MAX_SAFE_INTEGER);
  });
});
