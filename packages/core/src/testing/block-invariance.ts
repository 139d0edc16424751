import { type AnyBlock, type BlockOf, blockLength, concatBlocks, type Domain, sliceBlock } from '../pipeline/blocks.js';
import type { Stage } from '../pipeline/stage.js';
import { Rng } from '../random/rng.js';

/** Options of {@link checkBlockInvariance}. */
export interface BlockInvarianceOptions {
  /** Random splittings tried (default 5). */
  readonly trials?: number;
  /** Seed of the splittings (default 1). */
  readonly seed?: number;
  /** Largest block tried, in samples (default: the whole input). */
  readonly maxBlock?: number;
  /** Largest |difference| accepted (default 0: identical). */
  readonly tolerance?: number;
}

/** The verdict of {@link checkBlockInvariance}. */
export interface BlockInvarianceResult {
  /** True when every splitting gave the same output and `reset` restored the fresh state. */
  readonly ok: boolean;
  /** What differed, for the failure message. */
  readonly message: string;
}

/**
 * The block-size property every stage must have: the output is the same
 * whether the input arrives in one block or in many blocks of random sizes
 * (zero-length blocks and single samples included).
 *
 * `make` must build a fresh stage each call. Runs the whole input in one
 * block, then `trials` random splittings, and compares the concatenated
 * outputs sample by sample. A splitting is also tried after `reset()` on a
 * used stage, so that reset restores the initial state.
 * @example expect(checkBlockInvariance(() => viterbiViterbi({ modulation: 'qpsk' }), symbolsBlock).ok).toBe(true);
 */
export function checkBlockInvariance<In extends Domain, Out extends Domain>(
  make: () => Stage<In, Out, unknown>,
  input: BlockOf<In>,
  options: BlockInvarianceOptions = {},
): BlockInvarianceResult {
  const { trials = 5, seed = 1, tolerance = 0 } = options;
  const n = blockLength(input);
  const maxBlock = Math.max(1, Math.min(options.maxBlock ?? n, n));
  const whole = run(make(), [input]);
  const rng = new Rng(seed);
  for (let t = 0; t <= trials; t++) {
    const pieces: BlockOf<In>[] = [];
    let at = 0;
    while (at < n) {
      // Mix tiny, empty and large blocks.
      const r = rng.uniform();
      const size = r < 0.1 ? 0 : r < 0.3 ? 1 + rng.integer(3) : 1 + rng.integer(maxBlock);
      const end = Math.min(n, at + size);
      pieces.push(sliceBlock(input, at, end));
      at = end;
    }
    const stage = make();
    if (t === trials) {
      // Last trial: a used stage after reset must behave like a fresh one.
      run(stage, [input]);
      stage.reset();
    }
    const split = run(stage, pieces);
    const diff = compare(whole, split, tolerance);
    if (diff)
      return { ok: false, message: `trial ${t} (${pieces.length} blocks${t === trials ? ', after reset' : ''}): ${diff}` };
  }
  return { ok: true, message: '' };
}

function run<In extends Domain, Out extends Domain>(
  stage: Stage<In, Out, unknown>,
  pieces: readonly BlockOf<In>[],
): AnyBlock | null {
  const outs: AnyBlock[] = [];
  for (const p of pieces) outs.push(stage.process(p));
  const tail = stage.flush();
  if (tail) outs.push(tail);
  return outs.length > 0 ? concatBlocks(outs) : null;
}

function arraysOf(block: AnyBlock): { names: string[]; arrays: Float64Array[] } {
  return block.domain === 'channels'
    ? { names: ['xi', 'xq', 'yi', 'yq'], arrays: [block.xi, block.xq, block.yi, block.yq] }
    : { names: ['x', 'y'], arrays: [block.x, block.y] };
}

function compare(a: AnyBlock | null, b: AnyBlock | null, tolerance: number): string | null {
  if (!a || !b) return a === b ? null : 'one run produced no output';
  if (a.domain !== b.domain) return `domains differ: '${a.domain}' vs '${b.domain}'`;
  if (a.sampleRate !== b.sampleRate && !(Number.isNaN(a.sampleRate) && Number.isNaN(b.sampleRate))) {
    return `sample rates differ: ${a.sampleRate} vs ${b.sampleRate}`;
  }
  const { names, arrays: arraysA } = arraysOf(a);
  const { arrays: arraysB } = arraysOf(b);
  for (let c = 0; c < arraysA.length; c++) {
    const u = arraysA[c];
    const v = arraysB[c];
    if (u.length !== v.length) return `${names[c]}: ${u.length} values in one block, ${v.length} in many`;
    for (let i = 0; i < u.length; i++) {
      const d = Math.abs(u[i] - v[i]);
      if (!(d <= tolerance) && !(Number.isNaN(u[i]) && Number.isNaN(v[i]))) {
        return `${names[c]}[${i}]: ${u[i]} in one block, ${v[i]} in many (difference ${d}, tolerance ${tolerance})`;
      }
    }
  }
  return null;
}
