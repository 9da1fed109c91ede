/**
 * Checks on a payload's JSON text that JSON.parse does not make: it takes the last of duplicate
 * keys silently (so `{"values":{"ch01":1,"ch01":900}}` would keep 900 without a word) and has no
 * depth limit. Pure. Every message gets the allocation-free count; the naming pass only a refusal.
 */

import { BACKSLASH, CLOSE_ARRAY, CLOSE_OBJECT, COLON, COMMA, OPEN_ARRAY, OPEN_OBJECT, QUOTE } from './char-codes.js';

/** Deepest nesting a logger message needs is 2 (`{"values":{...}}`); anything far deeper is refused. */
export const MAX_JSON_DEPTH = 32;

export type JsonShapeProblem = { kind: 'duplicate_key'; key: string; path: string } | { kind: 'too_deep'; depth: number };


/**
 * The cheap check for every message, allocation-free: the object keys written in `text` (strings
 * followed by `:`) and its deepest nesting. JSON.parse keeps one key of each duplicate set, so a
 * parsed value with fewer keys than the text wrote has a duplicate; only then is the allocating
 * `jsonShapeProblem` run to name it. Call it on text that JSON.parse accepted.
 */
export function keyTokensAndDepth(text: string): { keys: number; depth: number } {
  let keys = 0;
  let depth = 0;
  let maxDepth = 0;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c === QUOTE) {
      // Jump to the closing quote: one not preceded by an odd run of backslashes.
      let j = text.indexOf('"', i + 1);
      while (j !== -1) {
        let b = 0;
        while (text.charCodeAt(j - 1 - b) === BACKSLASH) b++;
        if (b % 2 === 0) break;
        j = text.indexOf('"', j + 1);
      }
      if (j === -1) break;
      i = j;
    } else if (c === COLON) {
      // A key is the string before a colon (whitespace may sit between them).
      let k = i - 1;
      while (k >= 0 && (text.charCodeAt(k) === 0x20 || text.charCodeAt(k) === 0x09 || text.charCodeAt(k) === 0x0a || text.charCodeAt(k) === 0x0d)) k--;
      if (k >= 0 && text.charCodeAt(k) === QUOTE) keys++;
    } else if (c === OPEN_OBJECT || c === OPEN_ARRAY) {
      if (++depth > maxDepth) maxDepth = depth;
    } else if (c === CLOSE_OBJECT || c === CLOSE_ARRAY) depth--;
  }
  return { keys, depth: maxDepth };
}

/** Own keys of every object in a parsed JSON value (for-in: no array per object). */
export function parsedKeyCount(value: unknown): number {
  if (typeof value !== 'object' || value === null) return 0;
  let n = 0;
  if (Array.isArray(value)) {
    for (const v of value) n += parsedKeyCount(v);
    return n;
  }
  for (const k in value) {
    n++;
    n += parsedKeyCount((value as Record<string, unknown>)[k]);
  }
  return n;
}

/**
 * The first duplicate object key or excessive nesting in `text`, or null. Call it on text that
 * JSON.parse accepted (it does not validate JSON itself). The path names the object holding the
 * duplicate, in the decoder's dotted form (`values` for a channel given twice).
 */
export function jsonShapeProblem(text: string, maxDepth = MAX_JSON_DEPTH): JsonShapeProblem | null {
  // One entry per open container: its key set (objects; created on the first key) and its key in the parent.
  const keys: Array<Set<string> | null> = [];
  const isObject: boolean[] = [];
  const names: string[] = [];
  let expectKey = false;
  let lastKey = '';
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c === QUOTE) {
      let j = i + 1;
      let escaped = false;
      for (; j < text.length; j++) {
        const d = text.charCodeAt(j);
        if (d === BACKSLASH) { escaped = true; j++; continue; }
        if (d === QUOTE) break;
      }
      if (expectKey) {
        // Keys are compared as JSON.parse sees them: escapes decoded ("ch\u0030" is "ch0").
        const key = escaped ? (JSON.parse(text.slice(i, j + 1)) as string) : text.slice(i + 1, j);
        const top = keys.length - 1;
        let set = keys[top];
        if (set === null) keys[top] = set = new Set();
        if (set.has(key)) return { kind: 'duplicate_key', key, path: names.filter((n) => n !== '').join('.') };
        set.add(key);
        lastKey = key;
        expectKey = false;
      }
      i = j;
    } else if (c === OPEN_OBJECT || c === OPEN_ARRAY) {
      if (keys.length >= maxDepth) return { kind: 'too_deep', depth: keys.length + 1 };
      names.push(keys.length > 0 && isObject[isObject.length - 1] ? lastKey : '');
      keys.push(null);
      isObject.push(c === OPEN_OBJECT);
      expectKey = c === OPEN_OBJECT;
    } else if (c === CLOSE_OBJECT || c === CLOSE_ARRAY) {
      keys.pop();
      isObject.pop();
      names.pop();
      expectKey = false;
    } else if (c === COMMA) {
      expectKey = isObject.length > 0 && isObject[isObject.length - 1];
    } else if (c === COLON) {
      expectKey = false;
    }
  }
  return null;
}
