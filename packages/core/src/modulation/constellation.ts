import { OptionError } from '../pipeline/stage.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';

/** Modulation formats the library handles. */
export type ModulationName = 'qpsk' | '16qam' | '64qam';

/** Every modulation the library knows, in order of size. */
export const MODULATIONS: readonly ModulationName[] = ['qpsk', '16qam', '64qam'];

/**
 * A square M-QAM constellation, Gray-labelled per axis, with unit average
 * power. QPSK is 4-QAM.
 *
 * Labelling: a label of `bitsPerSymbol` bits, most significant bit first;
 * the upper half of the bits selects the in-phase level, the lower half the
 * quadrature level. Per axis, level index i ∈ [0, L) has amplitude
 * (2i − (L − 1))·scale and carries the Gray code i ⊕ (i >> 1), so that
 * neighbouring levels differ in exactly one bit.
 */
export interface Constellation {
  /** Which modulation. */
  readonly name: ModulationName;
  /** Number of points M. */
  readonly order: number;
  /** log2 M. */
  readonly bitsPerSymbol: number;
  /** Levels per axis, √M. */
  readonly levelsPerAxis: number;
  /** Amplitude of the unit level: √(3 / (2(M − 1))). */
  readonly scale: number;
  /** Points in label order, interleaved complex, M samples. */
  readonly points: ComplexArray;
  /** E|a|⁴ / E|a|²: the CMA dispersion constant R2 (1 for QPSK). */
  readonly cmaRadius2: number;
  /** Distinct squared radii, ascending (RDE rings). */
  readonly ringRadii2: readonly number[];
}

const cache = new Map<ModulationName, Constellation>();

/**
 * The constellation for a modulation name.
 * @throws RangeError for an unknown name
 * @example constellation('16qam').ringRadii2 // [0.2, 1, 1.8]
 */
export function constellation(name: ModulationName): Constellation {
  const hit = cache.get(name);
  if (hit) return hit;
  const order = ORDER[name];
  if (order === undefined) {
    throw new RangeError(`constellation: expected one of ${MODULATIONS.join(', ')}, received '${String(name)}'`);
  }
  const c = build(name, order);
  cache.set(name, c);
  return c;
}

/**
 * A modulation name checked where an option gives it: the one wording of the
 * rule for every stage and setting that takes one.
 * @throws OptionError naming the stage or function and the option
 * @example checkModulation('decision-equalizer', 'modulation', '16qam') // '16qam'
 */
export function checkModulation(where: string, option: string, value: unknown): ModulationName {
  if (!(MODULATIONS as readonly unknown[]).includes(value))
    throw new OptionError(where, option, `one of ${MODULATIONS.join(', ')}`, value);
  return value as ModulationName;
}

/**
 * Parses a modulation name (case-insensitive).
 * @throws RangeError for an unknown name
 * @example parseModulation('16QAM') // '16qam'
 */
export function parseModulation(text: string): ModulationName {
  const t = text.toLowerCase();
  if ((MODULATIONS as readonly string[]).includes(t)) return t as ModulationName;
  throw new RangeError(`expected a modulation among ${MODULATIONS.join(', ')}, received '${text}'`);
}

const ORDER: Record<ModulationName, number> = { qpsk: 4, '16qam': 16, '64qam': 64 };

function build(name: ModulationName, order: number): Constellation {
  const bitsPerSymbol = Math.log2(order);
  const levels = Math.sqrt(order);
  const half = bitsPerSymbol / 2;
  // E|a|² of the unscaled grid is 2(M − 1)/3.
  const scale = Math.sqrt(3 / (2 * (order - 1)));
  const points = complexArray(order);
  for (let label = 0; label < order; label++) {
    const iI = grayToIndex(label >> half);
    const iQ = grayToIndex(label & ((1 << half) - 1));
    points[2 * label] = (2 * iI - (levels - 1)) * scale;
    points[2 * label + 1] = (2 * iQ - (levels - 1)) * scale;
  }
  let m2 = 0;
  let m4 = 0;
  const radii = new Set<number>();
  for (let k = 0; k < order; k++) {
    const p = points[2 * k] ** 2 + points[2 * k + 1] ** 2;
    m2 += p;
    m4 += p * p;
    // Rounded so that equal radii computed in different orders merge.
    radii.add(Math.round(p * 1e12) / 1e12);
  }
  return {
    name,
    order,
    bitsPerSymbol,
    levelsPerAxis: levels,
    scale,
    points,
    cmaRadius2: m4 / m2,
    ringRadii2: [...radii].sort((a, b) => a - b),
  };
}

function grayToIndex(g: number): number {
  let i = g;
  for (let shift = g >> 1; shift > 0; shift >>= 1) i ^= shift;
  return i;
}

function indexToGray(i: number): number {
  return i ^ (i >> 1);
}

/**
 * Hard decisions: the label of the nearest constellation point for every
 * symbol (per-axis slicing, exact for square QAM).
 * @param symbols N complex symbols
 * @param out N labels (reused when given)
 * @returns `out`
 * @example const labels = decide(constellation('16qam'), symbols); // one label 0…15 per symbol
 */
export function decide(c: Constellation, symbols: ComplexArray, out?: Uint8Array): Uint8Array {
  const n = symbols.length >> 1;
  const labels = out ?? new Uint8Array(n);
  if (labels.length < n) throw new RangeError(`decide: output holds ${labels.length} labels, ${n} needed`);
  const L = c.levelsPerAxis;
  const half = c.bitsPerSymbol / 2;
  const inv = 1 / c.scale;
  const top = L - 1;
  for (let k = 0; k < n; k++) {
    let iI = Math.round((symbols[2 * k] * inv + top) * 0.5);
    let iQ = Math.round((symbols[2 * k + 1] * inv + top) * 0.5);
    // NaN fails both comparisons and would become label 0: reject it loudly instead.
    if (!(iI >= 0)) iI = iI < 0 ? 0 : failNaN(k);
    else if (iI > top) iI = top;
    if (!(iQ >= 0)) iQ = iQ < 0 ? 0 : failNaN(k);
    else if (iQ > top) iQ = top;
    labels[k] = (indexToGray(iI) << half) | indexToGray(iQ);
  }
  return labels;
}

function failNaN(k: number): never {
  throw new RangeError(`decide: symbol ${k} is not a finite number`);
}

/**
 * The nearest level of one axis of square QAM: (2i − (L − 1))·scale with
 * i = round((v/scale + L − 1)/2) clamped to 0 … L − 1 (the per-axis
 * decision; `top` = L − 1).
 * @example nearestLevel(0.5, constellation('16qam').scale, 3) // 0.316…: the level 1·scale
 */
export function nearestLevel(v: number, scale: number, top: number): number {
  let i = Math.round((v / scale + top) * 0.5);
  if (i < 0) i = 0;
  else if (i > top) i = top;
  return (2 * i - top) * scale;
}

/**
 * Maps bits to symbols: `bitsPerSymbol` consecutive bits (MSB first) per symbol.
 * @param bits N·log2 M bits, each 0 or 1
 * @returns N complex symbols
 * @throws RangeError when the bit count is not a multiple of log2 M
 * @example const symbols = mapBits(constellation('qpsk'), new Uint8Array([0, 0, 1, 1])); // 2 symbols
 */
export function mapBits(c: Constellation, bits: Uint8Array, out?: ComplexArray): ComplexArray {
  const k = c.bitsPerSymbol;
  if (bits.length % k !== 0) {
    throw new RangeError(`mapBits: ${bits.length} bits is not a multiple of ${k} bits per symbol`);
  }
  const n = bits.length / k;
  const symbols = out ?? complexArray(n);
  for (let s = 0; s < n; s++) {
    let label = 0;
    for (let b = 0; b < k; b++) label = (label << 1) | (bits[s * k + b] & 1);
    symbols[2 * s] = c.points[2 * label];
    symbols[2 * s + 1] = c.points[2 * label + 1];
  }
  return symbols;
}

/**
 * Symbols for the given labels.
 * @example labelsToSymbols(constellation('qpsk'), new Uint8Array([0, 3])) // two points, unit average power
 */
export function labelsToSymbols(c: Constellation, labels: Uint8Array, out?: ComplexArray): ComplexArray {
  const symbols = out ?? complexArray(labels.length);
  for (let s = 0; s < labels.length; s++) {
    symbols[2 * s] = c.points[2 * labels[s]];
    symbols[2 * s + 1] = c.points[2 * labels[s] + 1];
  }
  return symbols;
}

/**
 * Expands labels to bits (MSB first), log2 M bits per label.
 * @example labelsToBits(constellation('qpsk'), new Uint8Array([2])) // [1, 0]
 */
export function labelsToBits(c: Constellation, labels: Uint8Array, out?: Uint8Array): Uint8Array {
  const k = c.bitsPerSymbol;
  const bits = out ?? new Uint8Array(labels.length * k);
  for (let s = 0; s < labels.length; s++) {
    const label = labels[s];
    for (let b = 0; b < k; b++) bits[s * k + b] = (label >> (k - 1 - b)) & 1;
  }
  return bits;
}

/**
 * Demaps symbols to bits by hard decision.
 * @example const bits = demapBits(constellation('16qam'), symbols); // 4 bits per symbol
 */
export function demapBits(c: Constellation, symbols: ComplexArray): Uint8Array {
  return labelsToBits(c, decide(c, symbols));
}
