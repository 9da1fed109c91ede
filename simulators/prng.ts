/**
 * Small seeded pseudo-random source for the simulator: mulberry32 (a 32-bit generator with a
 * 2^32 period, common practice for repeatable test data; not for cryptography), Gaussian deviates
 * by the Box-Muller transform. Same seed, same sequence, on every platform (integer arithmetic).
 */
export interface Rng {
  /** Uniform in [0, 1). Advances the state. */
  uniform(): number;
  /** Standard normal deviate (mean 0, sd 1). Advances the state. */
  gaussian(): number;
}

/** A generator from a 32-bit seed. */
export function mulberry32(seed: number): Rng {
  let a = seed >>> 0;
  let spare = Number.NaN;
  const uniform = (): number => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  const gaussian = (): number => {
    if (spare === spare) {
      const s = spare;
      spare = Number.NaN;
      return s;
    }
    // Box-Muller: two uniforms give two independent normals; keep the second for the next call.
    const u1 = 1 - uniform(); // (0, 1]: log(0) never happens
    const u2 = uniform();
    const r = Math.sqrt(-2 * Math.log(u1));
    spare = r * Math.sin(2 * Math.PI * u2);
    return r * Math.cos(2 * Math.PI * u2);
  };
  return { uniform, gaussian };
}

/** Independent sub-seed for a named stream (FNV-1a of the name mixed with the seed). */
export function subSeed(seed: number, name: string): number {
  let h = 0x811c9dc5 ^ (seed >>> 0);
  for (let i = 0; i < name.length; i++) h = Math.imul(h ^ name.charCodeAt(i), 0x01000193);
  return h >>> 0;
}

/** Generator for a named stream of a seeded scenario. */
export function streamRng(seed: number, name: string): Rng {
  return mulberry32(subSeed(seed, name));
}
