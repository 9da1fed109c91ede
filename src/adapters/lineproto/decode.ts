/**
 * One line of line protocol -> Point: the inverse of `encodeLine` for the subset strainward writes
 * (float and integer fields, millisecond timestamps). Used to read line-protocol files back
 * (replay, checks). String and boolean fields are refused. Pure: no I/O.
 */
import type { Point } from '../../model/point.js';

/** Why a line could not be read; `column` is 0-based into the line. */
export class LineDecodeError extends Error {
  constructor(readonly reason: string, readonly column: number) {
    super(`line protocol: ${reason} at column ${column}`);
    this.name = 'LineDecodeError';
  }
}

interface Cursor {
  text: string;
  pos: number;
}

/** Reads up to an unescaped stop character; a backslash escapes the next `escapable` character. */
function readToken(cur: Cursor, stops: string, escapable: string): string {
  let out = '';
  while (cur.pos < cur.text.length) {
    const c = cur.text[cur.pos];
    if (c === '\\' && cur.pos + 1 < cur.text.length && escapable.includes(cur.text[cur.pos + 1])) {
      out += cur.text[cur.pos + 1];
      cur.pos += 2;
      continue;
    }
    if (stops.includes(c)) break;
    out += c;
    cur.pos += 1;
  }
  return out;
}

function expect(cur: Cursor, c: string, what: string): void {
  if (cur.text[cur.pos] !== c) throw new LineDecodeError(`expected ${what}`, cur.pos);
  cur.pos += 1;
}

/** Decodes one line (no trailing newline). Throws LineDecodeError naming the column. */
export function decodeLine(line: string): Point {
  const cur: Cursor = { text: line, pos: 0 };
  const measurement = readToken(cur, ', ', ', \\');
  if (measurement === '') throw new LineDecodeError('empty measurement', 0);
  // Null-prototype records: a key such as `__proto__` is data here, not the object's prototype.
  const tags: Record<string, string> = Object.create(null);
  while (cur.text[cur.pos] === ',') {
    cur.pos += 1;
    const key = readToken(cur, ',= ', ',= \\');
    expect(cur, '=', "'=' after tag key");
    tags[key] = readToken(cur, ', ', ',= \\');
  }
  expect(cur, ' ', 'space before fields');
  const fields: Record<string, number> = Object.create(null);
  do {
    if (cur.text[cur.pos] === ',') cur.pos += 1;
    const key = readToken(cur, ',= ', ',= \\');
    expect(cur, '=', "'=' after field key");
    const start = cur.pos;
    while (cur.pos < cur.text.length && cur.text[cur.pos] !== ',' && cur.text[cur.pos] !== ' ') cur.pos += 1;
    const raw = cur.text.slice(start, cur.pos).replace(/[iu]$/, '');
    const value = Number(raw);
    if (raw === '' || !Number.isFinite(value)) throw new LineDecodeError(`field ${key} is not a number`, start);
    fields[key] = value;
  } while (cur.text[cur.pos] === ',');
  expect(cur, ' ', 'space before timestamp');
  const timeText = cur.text.slice(cur.pos);
  if (!/^-?\d+$/.test(timeText)) throw new LineDecodeError('timestamp is not an integer', cur.pos);
  return { measurement, tags, fields, timeMs: Number(timeText) };
}

/** Decodes a text of lines; blank lines and `#` comments are skipped. Returns a new array. */
export function decodeLines(text: string): Point[] {
  const points: Point[] = [];
  for (const line of text.split('\n')) {
    if (line === '' || line.startsWith('#')) continue;
    points.push(decodeLine(line));
  }
  return points;
}
