/**
 * Loads the database token from an environment variable or a secret file, never from the
 * configuration file. Errors name the variable or the path, never the content.
 */
import { readFile, stat } from 'node:fs/promises';

/** A secret could not be loaded; the message never contains the secret. */
export class SecretError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'SecretError';
  }
}

/** Where the token may come from: `env` is the variable's name, `file` a path. */
export interface TokenSource {
  env?: string;
  file?: string;
}

/**
 * The token: the named environment variable when it is set and not blank, else the first line of
 * the file (surrounding whitespace trimmed), else null when neither source is configured.
 * Throws SecretError when the file is configured but missing, unreadable, empty, or readable by
 * other users (mode & 0o077), which would leak the token to other accounts.
 * `environment` defaults to process.env (injected for tests).
 */
export async function loadToken(source: TokenSource, environment: NodeJS.ProcessEnv = process.env): Promise<string | null> {
  if (source.env !== undefined) {
    const value = environment[source.env]?.trim();
    if (value) return value;
  }
  if (source.file === undefined) {
    if (source.env !== undefined) throw new SecretError(`token: environment variable ${source.env} is not set and no token file is configured`);
    return null;
  }
  let mode: number;
  let text: string;
  try {
    mode = (await stat(source.file)).mode;
    text = await readFile(source.file, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code ?? 'error';
    throw new SecretError(`token file ${source.file}: cannot read (${code})`);
  }
  if ((mode & 0o077) !== 0) {
    throw new SecretError(`token file ${source.file}: readable by group or others (mode ${(mode & 0o777).toString(8)}); chmod 600 it`);
  }
  const token = text.split('\n')[0]?.trim() ?? '';
  if (token === '') throw new SecretError(`token file ${source.file}: empty`);
  return token;
}

/** Replaces every occurrence of `secret` in `text` by `***`. Returns `text` unchanged for an empty secret. */
export function redact(text: string, secret: string | null | undefined): string {
  return secret ? text.split(secret).join('***') : text;
}
