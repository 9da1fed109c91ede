/**
 * What a result field name stands for (its place in a statistics array, the bytes of its line-protocol
 * key), remembered by position in the order the last result listed its fields. Results of one group
 * list the same fields in the same order (toGroupResult), so finding a name is one comparison with
 * the name seen at that position before (the same interned string: one pointer compare) instead of
 * a hash lookup; another order is looked up and remembered. Keep one per group (per series), never
 * shared between groups of different kinds, or they would keep displacing each other.
 */
export class FieldPlaces<T> {
  private readonly names: string[] = [];
  private readonly places: T[] = [];

  constructor(private readonly lookUp: (name: string) => T) {}

  /** What the field named `name`, listed i-th, stands for. */
  at(i: number, name: string): T {
    if (this.names[i] === name) return this.places[i];
    const place = this.lookUp(name);
    this.names[i] = name;
    this.places[i] = place;
    return place;
  }
}
