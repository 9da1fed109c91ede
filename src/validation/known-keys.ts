import type { z } from 'zod';

type Def = { type: string; [k: string]: unknown };
const defOf = (s: unknown): Def | null => ((s as { _zod?: { def?: Def } })?._zod?.def ?? null);

/** Wrappers whose inner schema describes the same value. */
function unwrap(def: Def): unknown[] {
  switch (def.type) {
    case 'optional': case 'nullable': case 'default': case 'prefault': case 'catch': case 'readonly': case 'nonoptional':
      return [def.innerType];
    case 'pipe': return [def.in];
    case 'lazy': return [(def.getter as () => unknown)()];
    case 'union': return def.options as unknown[];
    case 'intersection': return [def.left, def.right];
    default: return [];
  }
}

/** Every object schema the value at `path` may be checked against (all options of a union). */
function objectsAt(schema: unknown, path: readonly PropertyKey[], depth = 0): Def[] {
  const def = defOf(schema);
  if (def === null || depth > 64) return [];
  const inner = unwrap(def);
  if (inner.length > 0) return inner.flatMap((s) => objectsAt(s, path, depth + 1));
  if (path.length === 0) return def.type === 'object' ? [def] : [];
  const [head, ...rest] = path;
  if (def.type === 'object') {
    const child = (def.shape as Record<string, unknown>)[String(head)];
    return child === undefined ? [] : objectsAt(child, rest, depth + 1);
  }
  if (def.type === 'array' && typeof head === 'number') return objectsAt(def.element, rest, depth + 1);
  if (def.type === 'record') return objectsAt(def.valueType, rest, depth + 1);
  if (def.type === 'tuple' && typeof head === 'number') return objectsAt((def.items as unknown[])[head], rest, depth + 1);
  return [];
}

/** The keys an object at `path` of `schema` accepts (for "did you mean" on an unknown key). */
export function knownKeysAt(schema: z.ZodType, path: readonly PropertyKey[]): string[] {
  const keys = new Set<string>();
  for (const def of objectsAt(schema, path)) for (const k of Object.keys(def.shape as object)) keys.add(k);
  return [...keys];
}
