/** Where a server listens, from `host:port`. */
export interface ListenAddress {
  host: string;
  port: number;
}

/**
 * `127.0.0.1:9464`, `localhost:9464`, `[::1]:9464` (IPv6 in brackets), `0.0.0.0:9464`; port 0: any
 * free port. Pure; null when it is not host:port with a port from 0 to 65535.
 */
export function parseListenAddress(text: string): ListenAddress | null {
  const m = /^(?:\[([0-9A-Fa-f:.]+)\]|([A-Za-z0-9.-]+)):(\d{1,5})$/.exec(text.trim());
  if (m === null) return null;
  const port = Number(m[3]);
  return port <= 65_535 ? { host: m[1] ?? m[2], port } : null;
}
