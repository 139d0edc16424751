import { describe, expect, it } from 'vitest';
import { checkBlockInvariance } from '../../src/testing/index.js';
import { stageCatalog } from '../support/stage-catalog.js';

// The pipeline contract (DESIGN.md): one block or many blocks of any sizes
// give identical output. Every stage in the catalog is put through it.
describe('block-size invariance of every stage', () => {
  for (const entry of stageCatalog) {
    it(entry.name, () => {
      const r = checkBlockInvariance(entry.make, entry.input(), { trials: 6, seed: 11, tolerance: entry.tolerance ?? 0 });
      expect(r.message).toBe('');
      expect(r.ok).toBe(true);
    });
  }
});

// The check itself must catch a stage whose output depends on block boundaries.
describe('checkBlockInvariance', () => {
  it('rejects a stage that treats each block as a new stream', async () => {
    const { firFilter, complexArray } = await import('../../src/index.js');
    const taps = Float64Array.of(0.25, 0, 0.5, 0, 0.25, 0) as ReturnType<typeof complexArray>;
    const make = () => {
      const inner = firFilter({ taps });
      // Resetting per block forgets the filter memory: a classic streaming bug.
      return {
        ...inner,
        name: 'forgetful',
        input: inner.input,
        output: inner.output,
        process: (b: never) => {
          const out = inner.process(b);
          inner.reset();
          return out;
        },
        flush: () => inner.flush(),
        reset: () => inner.reset(),
        diagnostics: () => inner.diagnostics(),
        describe: () => inner.describe(),
      };
    };
    const { randomField } = await import('../support/stage-catalog.js');
    const r = checkBlockInvariance(make, randomField('field', 200, 5), { trials: 2 });
    expect(r.ok).toBe(false);
  });
});
