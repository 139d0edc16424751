import { describe, expect, expectTypeOf, it } from 'vitest';
import {
  BlockError,
  type BlockOf,
  combineChannels,
  type complexArray,
  type Domain,
  type FieldBlock,
  firFilter,
  pipe,
  type Stage,
  type StageRecord,
} from '../../src/index.js';
import { randomChannels } from '../support/stage-catalog.js';

/** A minimal stage between two domains, for the type-level checks. */
function passThrough<I extends Domain, O extends Domain>(input: I, output: O): Stage<I, O, { seen: number }> {
  let seen = 0;
  return {
    name: `${input}-to-${output}`,
    input,
    output,
    process: (b: BlockOf<I>) => {
      seen++;
      return { ...(b as object), domain: output } as unknown as BlockOf<O>;
    },
    flush: () => null,
    reset: () => {
      seen = 0;
    },
    diagnostics: () => ({ seen }),
    describe: (): StageRecord => ({ stage: 'pass', options: {} }),
  };
}

describe('pipe', () => {
  it('infers the domains and the diagnostics tuple of the chain', () => {
    const chain = pipe(combineChannels(), passThrough('field', 'twoSps'), passThrough('twoSps', 'symbols'));
    expectTypeOf(chain.input).toEqualTypeOf<'channels'>();
    expectTypeOf(chain.output).toEqualTypeOf<'symbols'>();
    expectTypeOf(chain.process).returns.toEqualTypeOf<FieldBlock<'symbols'>>();
    const out = chain.process(randomChannels(10, 1));
    expect(out.domain).toBe('symbols');
    const [combine, toTwo, toSym] = chain.diagnostics();
    expectTypeOf(toSym).toEqualTypeOf<{ seen: number }>();
    expect(combine.samples).toBe(10);
    expect(toTwo.seen).toBe(1);
    expect(chain.describe().stages?.map((s) => s.stage)).toEqual(['combine-channels', 'pass', 'pass']);
  });

  it('does not compile when the domains of neighbouring stages differ', () => {
    const carrierRecovery = passThrough('symbols', 'symbols');
    const resampler = passThrough('field', 'twoSps');
    // A symbol-rate stage fed a 2-samples-per-symbol waveform is a type error:
    // @ts-expect-error 'twoSps' output cannot feed a 'symbols' input
    expect(() => pipe(resampler, carrierRecovery)).toThrow(BlockError);
    // @ts-expect-error the four-channel stage cannot follow a field stage
    expect(() => pipe(resampler, combineChannels())).toThrow(/takes 'channels'/);
    // The matching order compiles and runs.
    expect(pipe(combineChannels(), resampler, passThrough('twoSps', 'symbols'), carrierRecovery).output).toBe('symbols');
  });

  it('flushes each stage through the ones after it', () => {
    const taps = Float64Array.of(0, 0, 1, 0, 0, 0) as ReturnType<typeof complexArray>; // a one-sample delay
    const chain = pipe(combineChannels(), firFilter({ taps }), firFilter({ taps }));
    const head = chain.process(randomChannels(20, 3));
    const tail = chain.flush();
    expect((head.x.length >> 1) + ((tail?.x.length ?? 0) >> 1)).toBe(20);
    chain.reset();
    expect(chain.diagnostics()[1].samples).toBe(0);
  });

  it('hands a long block on in pieces of at most 65,536 samples, with the same output', () => {
    // A stage that records the lengths it is given: after combine, a 200,000-sample block arrives in
    // four pieces; the chain's output is the same as the FIR's on the whole block.
    const seen: number[] = [];
    const recorder: Stage<'field', 'field', null> = {
      name: 'recorder',
      input: 'field',
      output: 'field',
      process: (b) => {
        seen.push(b.x.length >> 1);
        return b;
      },
      flush: () => null,
      reset: () => {},
      diagnostics: () => null,
      describe: (): StageRecord => ({ stage: 'recorder', options: {} }),
    };
    const taps = Float64Array.of(0.5, 0.1, 1, -0.2, 0.25, 0) as ReturnType<typeof complexArray>;
    const input = randomChannels(200_000, 4);
    const chain = pipe(combineChannels(), recorder, firFilter({ taps }));
    const out = chain.process(input);
    expect(seen).toEqual([65_536, 65_536, 65_536, 3_392]);
    const whole = firFilter({ taps }).process(combineChannels().process(input));
    expect(Array.from(out.x)).toEqual(Array.from(whole.x));
    expect(Array.from(out.y)).toEqual(Array.from(whole.y));
  });
});
