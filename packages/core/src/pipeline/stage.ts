import type { BlockOf, Domain } from './blocks.js';

/** A JSON-serializable value, for reproducibility records. */
export type JsonValue = null | boolean | number | string | readonly JsonValue[] | { readonly [key: string]: JsonValue };

/** What a stage is and how it was configured: enough to build it again. */
export interface StageRecord {
  /** Stage name. */
  readonly stage: string;
  /** Every option, defaults filled in. */
  readonly options: { readonly [key: string]: JsonValue };
  /** For a pipeline, the records of its stages in order. */
  readonly stages?: readonly StageRecord[];
}

/**
 * A stateful block processor from domain `In` to domain `Out`.
 *
 * Contract (checked for every stage by the block-size property test):
 * - `process` takes a block of any length (zero included) and returns what
 *   it can emit so far, keeping whatever state it needs (filter memory, taps,
 *   phase, loop filters) for the next block;
 * - `flush` ends the stream and returns what was held back, or `null`;
 * - the concatenated output is identical whatever the block sizes;
 * - `reset` returns the stage to its freshly created state;
 * - `diagnostics` reports what the stage learned; a stage never prints.
 *
 * Options are validated when a stage is created; `process` does not
 * re-validate them.
 */
export interface Stage<In extends Domain, Out extends Domain, Diagnostics = unknown> {
  /** Stage name, as in reproducibility records. */
  readonly name: string;
  /** Domain accepted. */
  readonly input: In;
  /** Domain produced. */
  readonly output: Out;
  /**
   * Takes the next block of the stream (any length, zero included) and
   * returns what can be emitted so far.
   * @throws BlockError when the block's domain, rate or lengths do not fit the stage
   */
  process(block: BlockOf<In>): BlockOf<Out>;
  /** Ends the stream: returns what was held back, or null when nothing was. */
  flush(): BlockOf<Out> | null;
  /** Returns to the freshly created state. */
  reset(): void;
  /** What the stage learned so far (a typed record; a stage never prints). */
  diagnostics(): Diagnostics;
  /** The stage's name and options, enough to build it again. */
  describe(): StageRecord;
}

/** Any stage, for generic code. */
// biome-ignore lint/suspicious/noExplicitAny: the widest stage type is needed for heterogeneous lists.
export type AnyStage = Stage<any, any, any>;

/** Domain accepted by a stage type. */
export type InputOf<S> = S extends Stage<infer I, Domain, unknown> ? I : never;
/** Domain produced by a stage type. */
export type OutputOf<S> = S extends Stage<Domain, infer O, unknown> ? O : never;
/** Diagnostics type of a stage type. */
export type DiagnosticsOf<S> = S extends Stage<Domain, Domain, infer D> ? D : never;

/**
 * Thrown when a stage's options are out of range or inconsistent: names the
 * stage, the option, what was expected and what was received.
 * @example throw new OptionError('my-stage', 'halfWindow', 'an integer ≥ 1', 0); // "my-stage: option 'halfWindow' expected an integer ≥ 1, received 0"
 */
export class OptionError extends RangeError {
  /** Always 'OptionError'. */
  override readonly name = 'OptionError';
  constructor(
    /** The stage (or function) whose option is wrong. */
    readonly stage: string,
    /** The option's name. */
    readonly option: string,
    /** What was expected, in words. */
    readonly expected: string,
    /** The value given. */
    readonly received: unknown,
  ) {
    super(`${stage}: option '${option}' expected ${expected}, received ${formatValue(received)}`);
  }
}

function formatValue(v: unknown): string {
  if (typeof v === 'string') return `'${v}'`;
  try {
    return JSON.stringify(v) ?? String(v);
  } catch {
    return String(v);
  }
}

/**
 * Thrown when a block does not fit a stage (wrong domain, length mismatch,
 * timing change mid-stream).
 * @example throw new BlockError(`${this.name}: expected a 'symbols' block, received '${block.domain}'`);
 */
export class BlockError extends RangeError {
  /** Always 'BlockError'. */
  override readonly name = 'BlockError';
}
