import { type BlockOf, blockLength, concatBlocks, type Domain, sliceBlock } from './blocks.js';
import { type AnyStage, BlockError, type Stage, type StageRecord } from './stage.js';

/**
 * A chain of stages that is itself a stage. Its diagnostics are the tuple of
 * its stages' diagnostics, in order.
 */
export interface Pipeline<In extends Domain, Out extends Domain, Diagnostics extends readonly unknown[]>
  extends Stage<In, Out, Diagnostics> {
  /** The stages, in order. */
  readonly stages: readonly AnyStage[];
}

/**
 * Composes stages left to right. Each stage's input domain must equal the
 * previous stage's output domain; a mismatch is a compile-time error (and a
 * `BlockError` at run time for untyped callers).
 *
 * @example
 * const chain = pipe(combineChannels(), firFilter({ taps }));
 * const out = chain.process(block); const tail = chain.flush();
 */
export function pipe<A extends Domain, B extends Domain, D1>(s1: Stage<A, B, D1>): Pipeline<A, B, [D1]>;
export function pipe<A extends Domain, B extends Domain, C extends Domain, D1, D2>(
  s1: Stage<A, B, D1>,
  s2: Stage<NoInfer<B>, C, D2>,
): Pipeline<A, C, [D1, D2]>;
export function pipe<A extends Domain, B extends Domain, C extends Domain, D extends Domain, D1, D2, D3>(
  s1: Stage<A, B, D1>,
  s2: Stage<NoInfer<B>, C, D2>,
  s3: Stage<NoInfer<C>, D, D3>,
): Pipeline<A, D, [D1, D2, D3]>;
export function pipe<A extends Domain, B extends Domain, C extends Domain, D extends Domain, E extends Domain, D1, D2, D3, D4>(
  s1: Stage<A, B, D1>,
  s2: Stage<NoInfer<B>, C, D2>,
  s3: Stage<NoInfer<C>, D, D3>,
  s4: Stage<NoInfer<D>, E, D4>,
): Pipeline<A, E, [D1, D2, D3, D4]>;
export function pipe<
  A extends Domain,
  B extends Domain,
  C extends Domain,
  D extends Domain,
  E extends Domain,
  F extends Domain,
  D1,
  D2,
  D3,
  D4,
  D5,
>(
  s1: Stage<A, B, D1>,
  s2: Stage<NoInfer<B>, C, D2>,
  s3: Stage<NoInfer<C>, D, D3>,
  s4: Stage<NoInfer<D>, E, D4>,
  s5: Stage<NoInfer<E>, F, D5>,
): Pipeline<A, F, [D1, D2, D3, D4, D5]>;
export function pipe<
  A extends Domain,
  B extends Domain,
  C extends Domain,
  D extends Domain,
  E extends Domain,
  F extends Domain,
  G extends Domain,
  D1,
  D2,
  D3,
  D4,
  D5,
  D6,
>(
  s1: Stage<A, B, D1>,
  s2: Stage<NoInfer<B>, C, D2>,
  s3: Stage<NoInfer<C>, D, D3>,
  s4: Stage<NoInfer<D>, E, D4>,
  s5: Stage<NoInfer<E>, F, D5>,
  s6: Stage<NoInfer<F>, G, D6>,
): Pipeline<A, G, [D1, D2, D3, D4, D5, D6]>;
export function pipe<
  A extends Domain,
  B extends Domain,
  C extends Domain,
  D extends Domain,
  E extends Domain,
  F extends Domain,
  G extends Domain,
  H extends Domain,
  D1,
  D2,
  D3,
  D4,
  D5,
  D6,
  D7,
>(
  s1: Stage<A, B, D1>,
  s2: Stage<NoInfer<B>, C, D2>,
  s3: Stage<NoInfer<C>, D, D3>,
  s4: Stage<NoInfer<D>, E, D4>,
  s5: Stage<NoInfer<E>, F, D5>,
  s6: Stage<NoInfer<F>, G, D6>,
  s7: Stage<NoInfer<G>, H, D7>,
): Pipeline<A, H, [D1, D2, D3, D4, D5, D6, D7]>;
export function pipe<
  A extends Domain,
  B extends Domain,
  C extends Domain,
  D extends Domain,
  E extends Domain,
  F extends Domain,
  G extends Domain,
  H extends Domain,
  I extends Domain,
  D1,
  D2,
  D3,
  D4,
  D5,
  D6,
  D7,
  D8,
>(
  s1: Stage<A, B, D1>,
  s2: Stage<NoInfer<B>, C, D2>,
  s3: Stage<NoInfer<C>, D, D3>,
  s4: Stage<NoInfer<D>, E, D4>,
  s5: Stage<NoInfer<E>, F, D5>,
  s6: Stage<NoInfer<F>, G, D6>,
  s7: Stage<NoInfer<G>, H, D7>,
  s8: Stage<NoInfer<H>, I, D8>,
): Pipeline<A, I, [D1, D2, D3, D4, D5, D6, D7, D8]>;
// Longer chains nest: a pipeline is itself a stage.
export function pipe(...stages: AnyStage[]): Pipeline<Domain, Domain, unknown[]> {
  if (stages.length === 0) throw new RangeError('pipe: expected at least one stage');
  for (let i = 1; i < stages.length; i++) {
    if (stages[i].input !== stages[i - 1].output) {
      throw new BlockError(
        `pipe: stage ${i + 1} '${stages[i].name}' takes '${stages[i].input}' but stage ${i} '${stages[i - 1].name}' gives '${stages[i - 1].output}'`,
      );
    }
  }
  return new Chain(stages);
}

/**
 * Longest block a chain hands from one stage to the next: 65,536 samples (or symbols),
 * the capture readers' block. Longer ones are cut (see `Chain.runFrom`).
 */
const PIECE_SAMPLES = 65_536;

/** Outputs of one stage's successive calls joined: the non-empty ones, or the first when all are empty. */
function joinOutputs(parts: readonly BlockOf<Domain>[]): BlockOf<Domain> {
  const nonEmpty = parts.filter((p) => blockLength(p) > 0);
  return nonEmpty.length > 0 ? concatBlocks(nonEmpty) : parts[0];
}

class Chain implements Pipeline<Domain, Domain, unknown[]> {
  readonly name = 'pipeline';
  readonly input: Domain;
  readonly output: Domain;

  constructor(readonly stages: readonly AnyStage[]) {
    this.input = stages[0].input;
    this.output = stages[stages.length - 1].output;
  }

  process(block: BlockOf<Domain>): BlockOf<Domain> {
    return this.runFrom(0, block);
  }

  /**
   * The stages from `first` on. A block longer than {@link PIECE_SAMPLES} that a stage
   * releases at once (a span it held to estimate on) goes on in pieces: every stage is
   * block-size invariant, so the output is the same, and each stage after it works on
   * (and allocates for) a piece at a time instead of the whole span.
   */
  private runFrom(first: number, block: BlockOf<Domain>): BlockOf<Domain> {
    let b = block;
    for (let i = first; i < this.stages.length; i++) {
      const n = blockLength(b);
      if (i > first && n > PIECE_SAMPLES) {
        const parts: BlockOf<Domain>[] = [];
        for (let at = 0; at < n; at += PIECE_SAMPLES) {
          parts.push(this.runFrom(i, sliceBlock(b, at, Math.min(n, at + PIECE_SAMPLES))));
        }
        return joinOutputs(parts);
      }
      b = this.stages[i].process(b);
    }
    return b;
  }

  flush(): BlockOf<Domain> | null {
    // Each stage's tail runs through the stages after it, then they flush too.
    let pending: BlockOf<Domain> | null = null;
    for (const s of this.stages) {
      const parts: BlockOf<Domain>[] = [];
      if (pending) parts.push(s.process(pending));
      const tail = s.flush();
      if (tail) parts.push(tail);
      pending = parts.length > 0 ? joinOutputs(parts) : null;
    }
    return pending;
  }

  reset(): void {
    for (const s of this.stages) s.reset();
  }

  diagnostics(): unknown[] {
    return this.stages.map((s) => s.diagnostics());
  }

  describe(): StageRecord {
    return { stage: this.name, options: {}, stages: this.stages.map((s) => s.describe()) };
  }
}
