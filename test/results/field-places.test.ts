import { describe, expect, it } from 'vitest';
import { FieldPlaces } from '../../src/results/field-places.js';

describe('FieldPlaces', () => {
  it('answers by position while the order holds, and looks up again (once) when a name moves', () => {
    const looked: string[] = [];
    const index = new Map([['a', 0], ['b', 1], ['c', 2]]);
    const places = new FieldPlaces((name) => { looked.push(name); return index.get(name) ?? -1; });
    const order = (names: string[]) => names.map((n, i) => places.at(i, n));
    expect(order(['a', 'b', 'c'])).toEqual([0, 1, 2]);
    expect(order(['a', 'b', 'c'])).toEqual([0, 1, 2]);
    expect(looked).toEqual(['a', 'b', 'c']);
    // A result without `a` lists b first: each shifted name is looked up once, then remembered.
    expect(order(['b', 'c'])).toEqual([1, 2]);
    expect(order(['b', 'c'])).toEqual([1, 2]);
    expect(looked).toEqual(['a', 'b', 'c', 'b', 'c']);
    // A name built at run time (not the same string object) still matches by value.
    expect(places.at(0, ['b'].join(''))).toBe(1);
    expect(places.at(2, 'zz')).toBe(-1);
  });
});
