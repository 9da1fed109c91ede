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
 * the file (surrounding whitespace trimmed), else null when neither source is configured. A set
 * variable together with a configured file is refused (SecretError): one source, unambiguous.
 * Throws SecretError when the file is configured but missing, unreadable, empty, or readable by
 * other users (mode & 0o077), which would leak the token to other accounts.
 * `environment` defaults to process.env (injected for tests).
 */
export async function loadToken(source: TokenSource, environment: NodeJS.ProcessEnv = process.env): Promise<string | null> {
  if (source.env !== undefined) {
    const value = environment[source.env]?.trim();
    // Both set: which one wins would be a guess, and the file's permissions would go unchecked.
    if (value && source.file !== undefined) {
      throw new SecretError(`token: both environment variable ${source.env} and token file ${source.file} are set; keep one`);
    }
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

/**
 * The ways a secret can appear in text that echoes it: as is, percent-encoded (both cases of hex,
 * form encoding), base64 and base64url, JSON-escaped. Longest first, so a longer form is replaced
 * whole before a shorter one inside it.
 */
export function secretForms(secret: string): string[] {
  const forms = new Set<string>([secret]);
  const percent = encodeURIComponent(secret);
  forms.add(percent);
  forms.add(percent.replace(/%[0-9A-F]{2}/g, (m) => m.toLowerCase()));
  forms.add(percent.replace(/%20/g, '+'));
  forms.add(encodeURI(secret));
  forms.add(Buffer.from(secret, 'utf8').toString('base64'));
  forms.add(Buffer.from(secret, 'utf8').toString('base64').replace(/=+$/, ''));
  forms.add(Buffer.from(secret, 'utf8').toString('base64url'));
  forms.add(JSON.stringify(secret).slice(1, -1));
  return [...forms].filter((f) => f.length > 0).sort((a, b) => b.length - a.length);
}

/**
 * Replaces every occurrence of `secret`, in every form of `secretForms`, in `text` by `***`.
 * Returns `text` unchanged for an empty secret.
 */
export function redact(text: string, secret: string | null | undefined): string {
  if (!secret) return text;
  let out = text;
  for (const form of secretForms(secret)) out = out.split(form).join('***');
  return out;
}

/** Query keys whose values are treated as secrets in URLs written to logs (common practice). */
const SECRET_QUERY_KEY = /token|key|secret|pass|pwd|auth|sig|signature|credential|session|code/i;

/**
 * A URL fit for a log line: user name and password replaced by `***`, and the value of every query
 * parameter whose name suggests a secret (token, key, signature...) replaced by `***`. Text that is
 * not a URL is returned unchanged.
 */
export function redactUrl(url: string): string {
  let u: URL;
  try {
    u = new URL(url);
  } catch {
    return url;
  }
  if (u.username !== '' || u.password !== '') {
    u.username = '***';
    u.password = u.password === '' ? '' : '***';
  }
  for (const key of [...u.searchParams.keys()]) {
    if (SECRET_QUERY_KEY.test(key)) u.searchParams.set(key, '***');
  }
  return u.toString().replace(/%2A%2A%2A/g, '***');
}
