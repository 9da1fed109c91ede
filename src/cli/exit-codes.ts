/**
 * Exit codes, in one place: 0 ok, 1 failure at run time, 2 bad usage or options, 3 invalid
 * configuration, 4 a processor is silent (`status`: offline, stopped, stale or absent), 5 an
 * acknowledgement or a rezero refused by the processor or left without a verdict (`ack`, `rezero`), 6 the replayed capture
 * has gaps (`replay` without `--accept-gaps`; the output and report are written all the same), 7 the
 * broker refused the login (user name, password, authorisation; at start-up or on a later reconnect),
 * 8 the replay window holds no data (`replay`: nothing to replay, nothing written), 9 the broker
 * cannot be reached (`status`, `alarms`: nothing can be said about the processors).
 *
 * A module of its own, importing nothing: `main` needs the codes before it knows which command runs.
 */
export const EXIT = { ok: 0, runtime: 1, usage: 2, config: 3, silent: 4, refused: 5, gaps: 6, brokerLogin: 7, emptyWindow: 8, brokerUnreachable: 9 } as const;
