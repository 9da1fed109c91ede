import { z } from 'zod';

/**
 * A key that was renamed: refused with a message naming its successor (a strict object would only
 * say "unknown key"). An optional `never`, so the parsed type carries nothing.
 */
export function renamedTo(newKey: string, why: string) {
  return z.never({ error: `renamed to "${newKey}": ${why}` }).optional();
}
