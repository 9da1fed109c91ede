import type { ValidationProblem } from './issues.js';

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

/**
 * A structure file given where a runtime file is expected, or the reverse, named as such: its
 * schema's own errors (a dozen unknown keys) would not say what went wrong. Null when the document
 * does not look like the other kind. Pure.
 */
export function wrongFileKind(doc: unknown, expected: 'structure' | 'runtime', option = '-c'): ValidationProblem | null {
  if (!isObject(doc)) return null;
  if (expected === 'runtime' && 'groups' in doc && 'gauges' in doc) {
    return {
      path: '(root)',
      reason: `this looks like a structure file: it has \`groups\` and \`gauges\`; ${option} wants a runtime file naming one (\`structure: <file>\`, with \`mqtt\`, \`database\`...)`,
    };
  }
  if (expected === 'structure' && typeof doc.structure === 'string' && ('mqtt' in doc || 'database' in doc)) {
    return {
      path: '(root)',
      reason: `this looks like a runtime file: its \`structure\` names the file ${JSON.stringify(doc.structure)}; ${option} wants the structure file itself (\`groups\`, \`gauges\`, \`materials\`...)`,
    };
  }
  return null;
}

/**
 * Which kind of file a parsed document is, by the keys only each kind has: a structure file
 * describes `groups` and `gauges`; a runtime file names its structure file (`structure: <file>`)
 * beside where the broker is (`mqtt`). Null when it is neither. Pure.
 */
export function detectFileKind(doc: unknown): 'structure' | 'runtime' | null {
  if (!isObject(doc)) return null;
  if ('groups' in doc || 'gauges' in doc) return 'structure';
  if (typeof doc.structure === 'string' || 'mqtt' in doc) return 'runtime';
  return null;
}
