import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { sortIndicesByKey } from '../../core/indexSort.js';

describe('sortIndicesByKey', () => {
  it('gives the order of the stable comparator sort (ECMAScript Array.prototype.sort is stable), ties included', () => {
    fc.assert(fc.property(fc.array(fc.integer({ min: -20, max: 20 }), { maxLength: 300 }), fc.boolean(), (ints, shuffled) => {
      const key = Float64Array.from(ints, (v) => v / 4);
      const start = [...key.keys()];
      // Any starting order, not only 0..n-1: ties keep it.
      if (shuffled) start.reverse();
      const order = Uint32Array.from(start);
      sortIndicesByKey(order, key);
      expect([...order]).toEqual([...start].sort((a, b) => key[a] - key[b]));
    }), { numRuns: 300 });
  });
});
