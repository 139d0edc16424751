import { OptionError } from '../pipeline/stage.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';
import { entropyBits, maxwellBoltzmann, nuForEntropy, type ShapingParameter } from './shaping.js';

/** Modulation formats with uniformly used points. */
export type UniformModulationName = 'qpsk' | '8qam' | '16qam' | '32qam' | '64qam' | '128qam' | '256qam';

/** The square formats a shaped format can be built over. */
export type ShapedBaseName = '64qam' | '256qam';

/**
 * A probabilistically shaped format: Maxwell–Boltzmann over the points of
 * 64QAM or 256QAM, named with its parameter, the entropy in bits per symbol
 * or ν (see `shaping.ts`): `ps-64qam:entropy=4.5`, `ps-256qam:nu=0.01`.
 */
export type ShapedModulationName = `ps-${ShapedBaseName}:entropy=${number}` | `ps-${ShapedBaseName}:nu=${number}`;

/** Every modulation name the library handles: a uniform format, or a shaped one with its parameter. */
export type ModulationName = UniformModulationName | ShapedModulationName;

/** Every uniform modulation the library knows, in order of size. */
export const MODULATIONS: readonly UniformModulationName[] = ['qpsk', '8qam', '16qam', '32qam', '64qam', '128qam', '256qam'];

/** The shaped families, by the name a descriptor gives (`"modulation": "ps-64qam"` with a `shaping` field). */
export const SHAPED_FAMILIES: readonly `ps-${ShapedBaseName}`[] = ['ps-64qam', 'ps-256qam'];

/** How the points are laid out, which sets the labelling and the fast paths. */
export type ConstellationLayout = 'square' | 'cross' | 'star';

/**
 * Points on a square lattice: the odd multiples of `scale` per axis, over a
 * bounding grid of `levels` × `levels` cells. The cell of a received value
 * is its per-axis nearest level; `cells` holds the label of the point there
 * (−1 for a cell without one, as the corners of cross QAM).
 */
export interface ConstellationGrid {
  /** Levels per axis of the bounding grid. */
  readonly levels: number;
  /** Half the spacing of the levels, at unit average power. */
  readonly scale: number;
  /** Labels by cell, levels × levels, index iI·levels + iQ (level i at (2i − (levels − 1))·scale); −1 for none. */
  readonly cells: Int16Array;
}

/**
 * A constellation as a value: its points, their bit labels and their prior
 * probabilities, with unit average power under the prior. Decisions, bit
 * metrics, theory, the reference check and the receiver's defaults are
 * derived from it; square QAM keeps per-axis fast paths behind it.
 *
 * Labelling: point k carries label k, `bitsPerSymbol` bits, most significant
 * first. Square QAM: the upper half of the bits Gray-codes the in-phase level,
 * the lower half the quadrature level (level index i ∈ [0, L) at
 * (2i − (L − 1))·scale carries i ⊕ (i >> 1)). Cross QAM (32, 128): a Gray
 * rectangle folded into a cross (quasi-Gray, see {@link constellation}).
 * 8QAM: the star of two rings, the ring in the first bit (see {@link constellation}).
 */
export interface Constellation {
  /** Which modulation (the canonical name; a shaped one carries its parameter). */
  readonly name: ModulationName;
  /** The uniform format whose points these are (itself for a uniform format). */
  readonly base: UniformModulationName;
  /** How the points are laid out. */
  readonly layout: ConstellationLayout;
  /** Number of points M. */
  readonly order: number;
  /** log2 M. */
  readonly bitsPerSymbol: number;
  /**
   * True for square QAM with per-axis Gray labels over the full grid (uniform
   * or shaped): decisions, distances and bit metrics then run per axis.
   */
  readonly square: boolean;
  /** Levels per axis of the grid (√M for square QAM); 0 for points off a lattice (8QAM). */
  readonly levelsPerAxis: number;
  /** Half the level spacing at unit average power (√(3 / (2(M − 1))) for uniform square QAM); half the least distance off a lattice. */
  readonly scale: number;
  /** The lattice of the points, or null for points off a lattice (8QAM). */
  readonly grid: ConstellationGrid | null;
  /** Points in label order, interleaved complex, M samples, with Σ P(aₖ)·|aₖ|² = 1. */
  readonly points: ComplexArray;
  /** Prior probability of each point, M values summing to 1 (1/M each for a uniform format). */
  readonly prior: Float64Array;
  /** True when the prior is not uniform (a shaped format). */
  readonly shaped: boolean;
  /** ν of the Maxwell–Boltzmann prior over the points at their integer coordinates (0 for a uniform format). */
  readonly nu: number;
  /** Entropy of the prior, bits per symbol (log2 M for a uniform format). */
  readonly entropy: number;
  /** Least distance between two points, at unit average power. */
  readonly minDistance: number;
  /** E|a|⁴ / E|a|² under the prior: the CMA dispersion constant R2 (1 for QPSK). */
  readonly cmaRadius2: number;
  /** E[a⁴] under the prior (real for constellations with quarter-turn symmetry): its sign says where Σz⁴ points. */
  readonly fourthPowerMean: number;
  /** Distinct squared radii, ascending (RDE rings). */
  readonly ringRadii2: readonly number[];
}

const cache = new Map<string, Constellation>();

/**
 * The constellation for a modulation name.
 *
 * - Square QAM (QPSK, 16, 64, 256): per-axis Gray labels.
 * - Cross QAM (32, 128): the Gray rectangle of 2^⌈m/2⌉ × 2^⌊m/2⌋ levels
 *   (in-phase bits first) with its outer columns folded onto the rows
 *   above and below: a point at (±I, Q) with |I| beyond the cross moves to
 *   (±|Q|, sign(Q)·(2(Lc + 1) − |I|)) (128QAM: see `fold128`), Lc the cross's outermost level, which
 *   fills the 6 × 6 (or 12 × 12) grid without its corners (the folding construction of Smith, "Odd-bit quadrature
 *   amplitude-shift keying", IEEE Trans. Commun. 23(3), 1975 — *from
 *   memory*; quasi-Gray: the neighbours across the fold differ in two bits;
 *   128QAM's outer blocks are placed so that this holds, see `fold128`).
 * - 8QAM: the star of four points at radius √2 (45°, 135°, 225°, 315°) and
 *   four at 1 + √3 on the axes, every neighbour at the same distance (the
 *   best 8-point signal set of the 8-point constellations compared in
 *   Proakis, Digital Communications, ch. 4 — *from memory*); the first bit
 *   selects the ring, the other two Gray-code the quadrant on both rings
 *   (00, 01, 11, 10 counter-clockwise from 45° and from 0°).
 * - Shaped (`ps-64qam:entropy=4.5`…): the points of the base with the
 *   Maxwell–Boltzmann prior (see `shaping.ts`), scaled to unit power under it.
 * @throws RangeError for an unknown name or a shaping parameter out of range
 * @example constellation('16qam').ringRadii2 // [0.2, 1, 1.8]
 */
export function constellation(name: ModulationName): Constellation {
  const hit = cache.get(name);
  if (hit) return hit;
  const spec = nameSpec(name);
  if (spec === null) throw new RangeError(`constellation: expected ${MODULATION_RULE}, received '${String(name)}'`);
  const c = build(name, spec);
  cache.set(name, c);
  return c;
}

/**
 * The modulation rule in words, for every message that refuses a name: the
 * uniform formats, or a shaped family with its parameter.
 * @example throw new RangeError(`expected ${MODULATION_RULE}, received '8psk'`);
 */
export const MODULATION_RULE = `one of ${MODULATIONS.join(', ')}, or ${SHAPED_FAMILIES.join(' or ')} with ':entropy=H' or ':nu=ν' (as ps-64qam:entropy=4.5)`;

interface NameSpec {
  readonly base: UniformModulationName;
  readonly shaping: ShapingParameter | null;
}

const SHAPED_NAME = /^ps-(64qam|256qam):(entropy|nu)=(.+)$/;

/** The base and shaping a canonical name stands for, or null for a name that is not one. */
function nameSpec(name: unknown): NameSpec | null {
  if (typeof name !== 'string') return null;
  if ((MODULATIONS as readonly string[]).includes(name)) return { base: name as UniformModulationName, shaping: null };
  const m = SHAPED_NAME.exec(name);
  if (m === null) return null;
  const v = Number(m[3]);
  // Canonical: the number as JavaScript writes it, so that one format has one name.
  if (!Number.isFinite(v) || String(v) !== m[3]) return null;
  return { base: m[1] as ShapedBaseName, shaping: m[2] === 'entropy' ? { entropy: v } : { nu: v } };
}

/**
 * The canonical name of a shaped format.
 * @param family 'ps-64qam' or 'ps-256qam'
 * @throws RangeError for another family or a parameter out of range (entropy above 2 bits and at most log2 M; ν ≥ 0)
 * @example shapedModulation('ps-64qam', { entropy: 4.5 }) // 'ps-64qam:entropy=4.5'
 */
export function shapedModulation(family: string, shaping: ShapingParameter): ShapedModulationName {
  if (!(SHAPED_FAMILIES as readonly string[]).includes(family))
    throw new RangeError(`shaping: expected a family among ${SHAPED_FAMILIES.join(', ')}, received '${family}'`);
  const name =
    'entropy' in shaping
      ? `${family}:entropy=${Number(shaping.entropy)}`
      : `${family}:nu=${Number((shaping as { nu: number }).nu)}`;
  constellation(name as ShapedModulationName);
  return name as ShapedModulationName;
}

/**
 * The family of a modulation: the name without its shaping parameter
 * ('ps-64qam' for 'ps-64qam:entropy=4.5'; a uniform name is its own).
 * @example modulationFamily('ps-256qam:nu=0.01') // 'ps-256qam'
 */
export function modulationFamily(name: ModulationName): string {
  const i = name.indexOf(':');
  return i < 0 ? name : name.slice(0, i);
}

/**
 * True for a canonical modulation name the library handles (a shaped one
 * with its parameter in range).
 * @example isModulationName('ps-64qam:entropy=4.5') // true
 */
export function isModulationName(value: unknown): value is ModulationName {
  if (nameSpec(value) === null) return false;
  try {
    constellation(value as ModulationName);
    return true;
  } catch (e) {
    if (e instanceof RangeError) return false;
    throw e;
  }
}

/**
 * A modulation name checked where an option gives it: the one wording of the
 * rule for every stage and setting that takes one.
 * @throws OptionError naming the stage or function and the option
 * @example checkModulation('decision-equalizer', 'modulation', '16qam') // '16qam'
 */
export function checkModulation(where: string, option: string, value: unknown): ModulationName {
  if (nameSpec(value) === null) throw new OptionError(where, option, MODULATION_RULE, value);
  try {
    constellation(value as ModulationName);
  } catch (e) {
    if (!(e instanceof RangeError)) throw e;
    throw new OptionError(where, option, `a shaping parameter in range (${e.message})`, value);
  }
  return value as ModulationName;
}

/**
 * Parses a modulation name (case-insensitive; a shaped one's number in any
 * decimal form) into its canonical name.
 * @throws RangeError for an unknown name or a shaping parameter out of range
 * @example parseModulation('PS-64QAM:entropy=4.50') // 'ps-64qam:entropy=4.5'
 */
export function parseModulation(text: string): ModulationName {
  const t = text.toLowerCase();
  if ((MODULATIONS as readonly string[]).includes(t)) return t as ModulationName;
  const m = SHAPED_NAME.exec(t);
  const v = m === null ? Number.NaN : Number(m[3].trim());
  if (m === null || m[3].trim() === '' || !Number.isFinite(v))
    throw new RangeError(`expected a modulation, ${MODULATION_RULE}, received '${text}'`);
  return shapedModulation(`ps-${m[1]}`, m[2] === 'entropy' ? { entropy: v } : { nu: v });
}

function build(name: ModulationName, spec: NameSpec): Constellation {
  const base = spec.base;
  const order = ORDER[base];
  const bitsPerSymbol = Math.log2(order);
  const layout: ConstellationLayout = base === '8qam' ? 'star' : base === '32qam' || base === '128qam' ? 'cross' : 'square';
  // Integer coordinates (spacing 2) in label order.
  const g = layout === 'square' ? squareGrid(order) : layout === 'cross' ? crossGrid(order) : starPoints();
  const energies = new Float64Array(order);
  for (let k = 0; k < order; k++) energies[k] = g[2 * k] ** 2 + g[2 * k + 1] ** 2;
  let nu = 0;
  if (spec.shaping !== null) nu = 'entropy' in spec.shaping ? nuForEntropy(energies, spec.shaping.entropy) : spec.shaping.nu;
  if (!(nu >= 0) || !Number.isFinite(nu)) throw new RangeError(`shaping: expected ν ≥ 0, received ${nu}`);
  const shaped = spec.shaping !== null;
  const prior = shaped ? maxwellBoltzmann(energies, nu) : new Float64Array(order).fill(1 / order);
  let power = 0;
  for (let k = 0; k < order; k++) power += prior[k] * energies[k];
  // Uniform square QAM keeps its closed form: E|a|² of the unscaled grid is 2(M − 1)/3.
  const scale = layout === 'square' && !shaped ? Math.sqrt(3 / (2 * (order - 1))) : 1 / Math.sqrt(power);
  const points = complexArray(order);
  for (let i = 0; i < 2 * order; i++) points[i] = g[i] * scale;
  let m2 = 0;
  let m4 = 0;
  let a4 = 0;
  const radii = new Set<number>();
  for (let k = 0; k < order; k++) {
    const re = points[2 * k];
    const im = points[2 * k + 1];
    const p = re ** 2 + im ** 2;
    // Sums, not means, for uniform formats (the ratio is the same): the uniform constants as they always were.
    const w = shaped ? prior[k] : 1;
    m2 += w * p;
    m4 += w * p * p;
    const r2 = re * re - im * im;
    const i2 = 2 * re * im;
    a4 += prior[k] * (r2 * r2 - i2 * i2);
    // Rounded so that equal radii computed in different orders merge.
    radii.add(Math.round(p * 1e12) / 1e12);
  }
  const levels = layout === 'star' ? 0 : gridLevels(g);
  return {
    name,
    base,
    layout,
    order,
    bitsPerSymbol,
    square: layout === 'square',
    levelsPerAxis: levels,
    scale,
    grid: levels > 0 ? { levels, scale, cells: gridCells(g, levels) } : null,
    points,
    prior,
    shaped,
    nu,
    entropy: shaped ? entropyBits(prior) : bitsPerSymbol,
    minDistance: leastDistance(points),
    cmaRadius2: m4 / m2,
    fourthPowerMean: a4,
    ringRadii2: [...radii].sort((a, b) => a - b),
  };
}

const ORDER: Record<UniformModulationName, number> = {
  qpsk: 4,
  '8qam': 8,
  '16qam': 16,
  '32qam': 32,
  '64qam': 64,
  '128qam': 128,
  '256qam': 256,
};

/** Square QAM at the odd integers, per-axis Gray labels (upper half of the bits in-phase). */
function squareGrid(order: number): Float64Array {
  const levels = Math.sqrt(order);
  const half = Math.log2(order) / 2;
  const g = new Float64Array(2 * order);
  for (let label = 0; label < order; label++) {
    g[2 * label] = 2 * grayToIndex(label >> half) - (levels - 1);
    g[2 * label + 1] = 2 * grayToIndex(label & ((1 << half) - 1)) - (levels - 1);
  }
  return g;
}

/** Cross QAM: the Gray rectangle folded into a cross (see {@link constellation}). */
function crossGrid(order: number): Float64Array {
  const m = Math.log2(order);
  const bitsQ = (m - 1) / 2;
  const li = 1 << (bitsQ + 1);
  const lq = 1 << bitsQ;
  // Outermost level of the cross: its bounding grid has 3·lq/2 levels per axis.
  const edge = (3 * lq) / 2 - 1;
  const g = new Float64Array(2 * order);
  for (let label = 0; label < order; label++) {
    let i = 2 * grayToIndex(label >> bitsQ) - (li - 1);
    let q = 2 * grayToIndex(label & (lq - 1)) - (lq - 1);
    if (Math.abs(i) > edge) {
      const [column, row] = order === 128 ? fold128(Math.abs(i), Math.abs(q)) : [Math.abs(q), 2 * (edge + 1) - Math.abs(i)];
      i = Math.sign(i) * column;
      q = Math.sign(q) * row;
    }
    g[2 * label] = i;
    g[2 * label + 1] = q;
  }
  return g;
}

/**
 * Where 128QAM's fold puts an outer point (|I| 13 or 15, |Q| 1 … 7 of the
 * 16 × 8 rectangle): columns 3 and 1 for |Q| 1 and 3, 5 and 7 for |Q| 5 and
 * 7; row 9 for |Q| 1 and 7, 11 for |Q| 3 and 5. Folded as 32QAM's are
 * (column |Q|, row 24 − |I|), eight neighbour pairs across the seam would
 * differ in four bits; so placed, every neighbour pair differs in at most
 * two, the sixteen across the seam in two (1.069 bits per neighbour pair
 * on average instead of 1.138, counted in the tests).
 */
function fold128(i: number, q: number): [number, number] {
  const column = q <= 3 ? 16 - i : i - 8;
  const row = q === 1 || q === 7 ? 9 : 11;
  return [column, row];
}

/** The 8-point star (see {@link constellation}): the ring in the first bit, the Gray quadrant in the other two. */
function starPoints(): Float64Array {
  const g = new Float64Array(16);
  const outer = 1 + Math.sqrt(3);
  // Quadrant step (counter-clockwise) of each 2-bit code: 00, 01, 11, 10.
  const step = [0, 1, 3, 2];
  for (let label = 0; label < 8; label++) {
    const ring = label >> 2;
    const angle = (step[label & 3] * Math.PI) / 2 + (ring === 0 ? Math.PI / 4 : 0);
    const r = ring === 0 ? Math.SQRT2 : outer;
    // Exact zeros and ±1 on the axes and diagonals, not cos(π/2) ≈ 6e-17.
    g[2 * label] = r * roundedTrig(Math.cos(angle));
    g[2 * label + 1] = r * roundedTrig(Math.sin(angle));
  }
  return g;
}

function roundedTrig(v: number): number {
  if (Math.abs(v) < 1e-12) return 0;
  if (Math.abs(Math.abs(v) - Math.SQRT1_2) < 1e-12) return Math.sign(v) * Math.SQRT1_2;
  if (Math.abs(Math.abs(v) - 1) < 1e-12) return Math.sign(v);
  return v;
}

/** Levels per axis of the bounding grid of points at odd integers. */
function gridLevels(g: Float64Array): number {
  let top = 0;
  for (let i = 0; i < g.length; i++) top = Math.max(top, Math.abs(g[i]));
  return top + 1;
}

function gridCells(g: Float64Array, levels: number): Int16Array {
  const cells = new Int16Array(levels * levels).fill(-1);
  for (let k = 0; k < g.length >> 1; k++) {
    const iI = (g[2 * k] + levels - 1) / 2;
    const iQ = (g[2 * k + 1] + levels - 1) / 2;
    cells[iI * levels + iQ] = k;
  }
  return cells;
}

function leastDistance(points: ComplexArray): number {
  let least = Number.POSITIVE_INFINITY;
  const n = points.length >> 1;
  for (let a = 0; a < n; a++)
    for (let b = a + 1; b < n; b++)
      least = Math.min(least, (points[2 * a] - points[2 * b]) ** 2 + (points[2 * a + 1] - points[2 * b + 1]) ** 2);
  return Math.sqrt(least);
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
 * The label of the point nearest to r = re + j·im (minimum distance; the
 * decision for every prior here, as the receiver's decisions are made).
 * Square and cross QAM: the per-axis nearest level of the bounding grid,
 * whose point is the nearest one when the cell holds one; otherwise (a
 * corner of cross QAM, or 8QAM off a lattice) a search over the points. A
 * per-sample kernel: it does not check its input (NaN gives some label).
 * @example nearestLabel(constellation('32qam'), 0.9, 0.9) // the label of the nearest point of 32QAM
 */
export function nearestLabel(c: Constellation, re: number, im: number): number {
  const g = c.grid;
  if (g !== null) {
    const top = g.levels - 1;
    const inv = 1 / g.scale;
    let iI = Math.round((re * inv + top) * 0.5);
    let iQ = Math.round((im * inv + top) * 0.5);
    if (iI < 0) iI = 0;
    else if (iI > top) iI = top;
    if (iQ < 0) iQ = 0;
    else if (iQ > top) iQ = top;
    const label = g.cells[iI * g.levels + iQ];
    if (label >= 0) return label;
  }
  const p = c.points;
  let best = 0;
  let least = Number.POSITIVE_INFINITY;
  for (let k = 0; k < c.order; k++) {
    const dr = re - p[2 * k];
    const di = im - p[2 * k + 1];
    const d = dr * dr + di * di;
    if (d < least) {
      least = d;
      best = k;
    }
  }
  return best;
}

/**
 * Hard decisions: the label of the nearest constellation point for every
 * symbol (per-axis slicing for square QAM; {@link nearestLabel} otherwise).
 * @param symbols N complex symbols
 * @param out N labels (reused when given)
 * @returns `out`
 * @throws RangeError for a symbol that is not a finite number, or an output too short
 * @example const labels = decide(constellation('16qam'), symbols); // one label 0…15 per symbol
 */
export function decide(c: Constellation, symbols: ComplexArray, out?: Uint8Array): Uint8Array {
  const n = symbols.length >> 1;
  const labels = out ?? new Uint8Array(n);
  if (labels.length < n) throw new RangeError(`decide: output holds ${labels.length} labels, ${n} needed`);
  if (!c.square) {
    for (let k = 0; k < n; k++) {
      const re = symbols[2 * k];
      const im = symbols[2 * k + 1];
      // NaN would decide some label silently: reject it loudly instead.
      if (Number.isNaN(re) || Number.isNaN(im)) failNaN(k);
      labels[k] = nearestLabel(c, re, im);
    }
    return labels;
  }
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
 * The nearest point itself, written to out[0] (real) and out[1] (imaginary):
 * per axis for square QAM ({@link nearestLevel}), through
 * {@link nearestLabel} otherwise. A per-sample kernel: it does not allocate.
 * @example const d = new Float64Array(2); nearestPoint(constellation('16qam'), 0.5, -0.2, d); // d ≈ [0.316, −0.316]
 */
export function nearestPoint(c: Constellation, re: number, im: number, out: Float64Array): void {
  if (c.square) {
    const top = c.levelsPerAxis - 1;
    out[0] = nearestLevel(re, c.scale, top);
    out[1] = nearestLevel(im, c.scale, top);
    return;
  }
  const l = nearestLabel(c, re, im);
  out[0] = c.points[2 * l];
  out[1] = c.points[2 * l + 1];
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
