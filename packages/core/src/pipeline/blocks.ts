import { type ComplexArray, complexArray, concatComplex, sliceComplex } from '../signal/complex.js';

/**
 * The blocks that flow between stages, one type per signal domain.
 *
 * - `channels`: the four real ADC channels at the scope rate;
 * - `field`: the complex dual-polarization field at the scope rate;
 * - `twoSps`: the field at 2 samples per symbol;
 * - `symbols`: one complex sample per symbol and polarization.
 *
 * Later code may add domains by merging into {@link DomainBlocks}.
 */
export interface DomainBlocks {
  /** The scope's four real channels xi, xq, yi, yq at the capture's rate. */
  channels: ChannelBlock;
  /** Complex x and y fields at the capture's rate. */
  field: FieldBlock<'field'>;
  /** Complex fields at 2 samples per symbol. */
  twoSps: FieldBlock<'twoSps'>;
  /** One complex value per symbol and polarization. */
  symbols: FieldBlock<'symbols'>;
}

/** A signal domain name. */
export type Domain = keyof DomainBlocks;

/** The block type of a domain. */
export type BlockOf<D extends Domain> = DomainBlocks[D];

/** Real four-channel block. All arrays have the same length. */
export interface ChannelBlock {
  /** Always 'channels'. */
  readonly domain: 'channels';
  /** In-phase channel of x, capture units, one value per sample. */
  readonly xi: Float64Array;
  /** Quadrature channel of x. */
  readonly xq: Float64Array;
  /** In-phase channel of y. */
  readonly yi: Float64Array;
  /** Quadrature channel of y. */
  readonly yq: Float64Array;
  /** Sa/s. */
  readonly sampleRate: number;
  /** Nominal samples per symbol (non-integer allowed), NaN when not known. */
  readonly samplesPerSymbol: number;
}

/** Complex dual-polarization block; `x` and `y` have the same length. */
export interface FieldBlock<D extends 'field' | 'twoSps' | 'symbols' = 'field' | 'twoSps' | 'symbols'> {
  /** The domain this block belongs to. */
  readonly domain: D;
  /** x polarization, interleaved complex (2 numbers per sample). */
  readonly x: ComplexArray;
  /** y polarization, the same length as `x`. */
  readonly y: ComplexArray;
  /** Sa/s. */
  readonly sampleRate: number;
  /** Samples per symbol (1 for symbols, 2 for twoSps, the capture's for field). */
  readonly samplesPerSymbol: number;
}

/** Any block. */
export type AnyBlock = BlockOf<Domain>;

/**
 * Number of samples (per channel or per polarization) in a block.
 * @example blockLength({ domain: 'channels', ...sim.channels, samplesPerSymbol: 2 }) // samples per channel
 */
export function blockLength(block: AnyBlock): number {
  return block.domain === 'channels' ? block.xi.length : block.x.length >> 1;
}

/**
 * A new block of the same domain and timing with other data (copied by reference).
 * @example const b = fieldBlock('symbols', x, y, 32e9, 1);
 */
export function fieldBlock<D extends 'field' | 'twoSps' | 'symbols'>(
  domain: D,
  x: ComplexArray,
  y: ComplexArray,
  sampleRate: number,
  samplesPerSymbol: number,
): FieldBlock<D> {
  if (x.length !== y.length) {
    throw new RangeError(`fieldBlock: x has ${x.length >> 1} samples, y has ${y.length >> 1}`);
  }
  return { domain, x, y, sampleRate, samplesPerSymbol };
}

/**
 * An empty block of a domain with the given timing.
 * @example emptyBlock('twoSps', 64e9, 2) // zero samples, for a stage with nothing to emit yet
 */
export function emptyBlock<D extends Domain>(domain: D, sampleRate: number, samplesPerSymbol: number): BlockOf<D> {
  if (domain === 'channels') {
    const z = new Float64Array(0);
    return { domain, xi: z, xq: z, yi: z, yq: z, sampleRate, samplesPerSymbol } as BlockOf<D>;
  }
  return fieldBlock(domain as 'field', complexArray(0), complexArray(0), sampleRate, samplesPerSymbol) as BlockOf<D>;
}

/**
 * Samples `[start, end)` of a block, copied.
 * @example const first = sliceBlock(block, 0, 4096); // samples 0…4095
 */
export function sliceBlock<B extends AnyBlock>(block: B, start: number, end: number): B {
  if (block.domain === 'channels') {
    return {
      ...block,
      xi: block.xi.slice(start, end),
      xq: block.xq.slice(start, end),
      yi: block.yi.slice(start, end),
      yq: block.yq.slice(start, end),
    };
  }
  return { ...block, x: sliceComplex(block.x, start, end), y: sliceComplex(block.y, start, end) };
}

/**
 * Concatenates blocks of one domain; their timing is taken from the first.
 * @throws RangeError when given no block or blocks of several domains
 * @example const whole = concatBlocks([stage.process(a), stage.process(b), stage.flush() ?? emptyBlock('symbols', 32e9, 1)]);
 */
export function concatBlocks<B extends AnyBlock>(blocks: readonly B[]): B {
  if (blocks.length === 0) throw new RangeError('concatBlocks: expected at least one block');
  const first = blocks[0];
  for (const b of blocks) {
    if (b.domain !== first.domain) {
      throw new RangeError(`concatBlocks: blocks of domains '${first.domain}' and '${b.domain}' cannot be joined`);
    }
  }
  if (blocks.length === 1) return first;
  if (first.domain === 'channels') {
    const cb = blocks as readonly ChannelBlock[];
    return {
      ...first,
      xi: concatReal(cb.map((b) => b.xi)),
      xq: concatReal(cb.map((b) => b.xq)),
      yi: concatReal(cb.map((b) => b.yi)),
      yq: concatReal(cb.map((b) => b.yq)),
    };
  }
  const fb = blocks as readonly FieldBlock[];
  return { ...first, x: concatComplex(fb.map((b) => b.x)), y: concatComplex(fb.map((b) => b.y)) };
}

function concatReal(parts: readonly Float64Array[]): Float64Array {
  let total = 0;
  for (const p of parts) total += p.length;
  const out = new Float64Array(total);
  let offset = 0;
  for (const p of parts) {
    out.set(p, offset);
    offset += p.length;
  }
  return out;
}
