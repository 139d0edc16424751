import { closeSync } from 'node:fs';
import {
  type ComplexArray,
  type Constellation,
  complexArray,
  constellation,
  type DualPol,
  type ModulationName,
  nearestLabel,
} from '@intradyne/core';
import {
  type CompactReference,
  compactReference,
  ReferenceLabeler,
  ReferencePriorError,
  referencePriorProblem,
} from '@intradyne/metrics';
import { InputError, withLinkTarget } from '../errors/input-error.js';
import { BufferFeeder, type HeaderCell, listColumns, NumericCsvTable, type TableBlock } from '../load/csv-table.js';
import { linkTarget, openInput, readInput } from '../load/open-file.js';
import { LIMITS } from './limits.js';

/** Reference column names, in slot order. */
export const REFERENCE_COLUMNS = ['x_re', 'x_im', 'y_re', 'y_im'] as const;

/**
 * Fewest reference symbols accepted: 32. Below that a pattern is too short to
 * be located unambiguously in a capture by correlation (our choice; a
 * capture's own length is checked by the analysis, which knows it).
 */
export const MIN_REFERENCE_SYMBOLS = 32;

/**
 * Largest distance, per axis, of a scaled reference point from the nearest
 * constellation point, as a fraction of the level spacing: 0.1. Points
 * written with 6 significant digits pass; a reference of another square QAM
 * format fails (its levels sit at least a quarter of a spacing away).
 */
export const REFERENCE_POINT_TOLERANCE = 0.1;

/**
 * Resolves the x_re, x_im, y_re, y_im columns (case-insensitive) of a reference table.
 * @throws InputError for a missing or duplicate column
 */
export function referenceResolver(file: string) {
  return (cells: readonly HeaderCell[], line: number): Int32Array => {
    const slots = new Int32Array(cells.length).fill(-1);
    REFERENCE_COLUMNS.forEach((name, s) => {
      const hits = cells.filter((c) => c.name.toLowerCase() === name);
      if (hits.length === 0) {
        throw new InputError(
          { file, line, column: 1 },
          'header',
          `the reference columns ${REFERENCE_COLUMNS.join(',')} (a column named '${name}')`,
          listColumns(cells),
        );
      }
      if (hits.length > 1) {
        throw new InputError(
          { file, line, column: hits[1].column },
          `column '${hits[1].name}' (field ${hits[1].field})`,
          `one column named '${name}'`,
          `a second one (the first is field ${hits[0].field})`,
        );
      }
      slots[hits[0].field - 1] = s;
    });
    return slots;
  };
}

/**
 * Loads reference symbols from a CSV with header `x_re,x_im,y_re,y_im`
 * (`#` comments allowed, other columns ignored), one row per transmitted
 * symbol, any scale.
 * @returns the symbols, interleaved complex, one array per polarization
 * @throws InputError for any problem of the file (as the capture loader),
 *   fewer than {@link MIN_REFERENCE_SYMBOLS} rows, or more than
 *   `LIMITS.maxReferenceSymbols`
 * @example const ref = loadReferenceCsv('tx-symbols.csv'); // header x_re,x_im,y_re,y_im
 */
export function loadReferenceCsv(path: string): DualPol {
  const blocks: TableBlock[] = [];
  readReferenceBlocks(path, (b) => blocks.push(b));
  let n = 0;
  for (const b of blocks) n += b.rows;
  const x = complexArray(n);
  const y = complexArray(n);
  let k = 0;
  for (const b of blocks) {
    const [xr, xi, yr, yi] = b.slots;
    for (let i = 0; i < b.rows; i++, k++) {
      x[2 * k] = xr[i];
      x[2 * k + 1] = xi[i];
      y[2 * k] = yr[i];
      y[2 * k + 1] = yi[i];
    }
  }
  const symbols = { x, y };
  checkReferenceLength(symbols, path);
  return symbols;
}

/** Rows of a reference kept in memory between the passes of {@link loadReferenceLabelsCsv}: 2^20 (32 MB); a longer file is read again. */
const HELD_REFERENCE_ROWS = 1 << 20;

/**
 * Loads a reference CSV as its labels ({@link CompactReference}: 2 bytes
 * per symbol instead of 32), checked as {@link loadReferenceCsv},
 * {@link checkReferenceConstellation} and `referenceLabels` check it, in
 * memory that does not grow with the file beyond the labels: the rows are
 * read three times (the scales, the checks and the least-squares scale,
 * the labels), from memory for a file of up to 2^20 rows, from the file
 * again for a longer one.
 * @throws InputError for any problem of the file (as {@link loadReferenceCsv}), for a
 *   reference that is not of the modulation (as {@link checkReferenceConstellation}), and for a
 *   symbol more than a twentieth of the level spacing from its point after the least-squares scaling
 * @example const ref = loadReferenceLabelsCsv('tx-symbols.csv', '16qam'); ref.symbols;
 */
export function loadReferenceLabelsCsv(path: string, modulation: ModulationName): CompactReference {
  const c = constellation(modulation);
  let held: TableBlock[] | null = [];
  let rows = 0;
  const peaks = [0, 0];
  const labelers = [new ReferenceLabeler(c), new ReferenceLabeler(c)];
  const scratch = complexArray(65536);
  // Both polarizations of a block, interleaved into the scratch in turn.
  const eachPol = (b: TableBlock, visit: (p: 0 | 1, z: ComplexArray) => void) => {
    for (const p of [0, 1] as const) {
      const re = b.slots[2 * p];
      const im = b.slots[2 * p + 1];
      const z = (b.rows * 2 > scratch.length ? complexArray(b.rows) : scratch.subarray(0, 2 * b.rows)) as ComplexArray;
      for (let i = 0; i < b.rows; i++) {
        z[2 * i] = re[i];
        z[2 * i + 1] = im[i];
      }
      visit(p, z);
    }
  };
  readReferenceBlocks(path, (b) => {
    rows += b.rows;
    if (held !== null) held.push(b);
    if (held !== null && rows > HELD_REFERENCE_ROWS) held = null;
    eachPol(b, (p, z) => {
      let peak = peaks[p];
      for (let i = 0; i < z.length; i++) peak = Math.max(peak, Math.abs(z[i]));
      peaks[p] = peak;
      labelers[p].addPower(z);
    });
  });
  if (rows < MIN_REFERENCE_SYMBOLS) {
    throw new InputError({ file: path }, 'reference', `at least ${MIN_REFERENCE_SYMBOLS} symbols`, `${rows}`);
  }
  const again = (visit: (b: TableBlock) => void) => {
    if (held !== null) for (const b of held) visit(b);
    else readReferenceBlocks(path, visit);
  };
  const labels = { x: new Uint8Array(rows), y: new Uint8Array(rows) };
  const out = [labels.x, labels.y];
  // A scale that cannot be fitted is reported after the constellation checks, which say more.
  let scaleProblem: unknown = null;
  for (const p of [0, 1] as const) {
    try {
      labelers[p].beginScale(out[p]);
    } catch (e) {
      scaleProblem ??= e;
    }
  }
  const check = new ConstellationCheck(c, path, peaks);
  let first = 0;
  again((b) => {
    eachPol(b, (p, z) => {
      check.add(p, z, first);
      if (scaleProblem === null) labelers[p].addScale(z, first);
    });
    first += b.rows;
  });
  check.finish();
  if (scaleProblem !== null)
    throw new InputError({ file: path }, 'reference', `${c.name} symbols`, String((scaleProblem as Error).message));
  for (const l of labelers) l.beginLabels();
  first = 0;
  again((b) => {
    eachPol(b, (p, z) => {
      const k = labelers[p].label(z, first);
      if (k < 0) return;
      throw new InputError(
        { file: path },
        `reference symbol ${first + k + 1}, polarization ${p === 0 ? 'x' : 'y'}`,
        `a point of the ${c.name} constellation after the least-squares scaling (within a twentieth of a level spacing)`,
        `${z[2 * k]}${z[2 * k + 1] < 0 ? '' : '+'}${z[2 * k + 1]}j`,
      );
    });
    first += b.rows;
  });
  const prior = referencePriorProblem(c, [labels.x, labels.y]);
  if (prior !== null) throw new InputError({ file: path }, 'reference', `symbols drawn with the ${c.name} prior`, prior);
  return { modulation, symbols: rows, labels };
}

/** Reads a reference CSV block by block (65,536 rows each), checking the columns and the row limit. */
function readReferenceBlocks(path: string, onBlock: (b: TableBlock) => void): void {
  let rows = 0;
  const keep = (b: TableBlock) => {
    rows += b.rows;
    // Checked as the rows come, so that a huge file is refused before it fills the memory.
    if (rows > LIMITS.maxReferenceSymbols)
      throw new InputError(
        { file: path, line: b.lines[b.rows - 1] },
        'reference',
        `at most ${LIMITS.maxReferenceSymbols} symbols`,
        `more (${rows} rows so far)`,
      );
    onBlock(b);
  };
  const table = new NumericCsvTable(path, referenceResolver(path), keep, { blockRows: 65536 });
  const feeder = new BufferFeeder(table, path);
  const fd = openInput(path, 'reference');
  try {
    while (feeder.feed(readInput(fd, path, 'reference', feeder.buffer, feeder.offset, feeder.room, null))) {
      // reading
    }
  } catch (e) {
    throw withLinkTarget(e, path, linkTarget(path));
  } finally {
    closeSync(fd);
  }
}

/**
 * A reference loaded as symbols (an Arrow file) made compact: its labels,
 * with the errors of `referenceLabels` as InputErrors naming the file.
 * @throws InputError for a symbol too far from its point after the least-squares scaling
 */
export function compactReferenceOf(symbols: DualPol, modulation: ModulationName, file: string): CompactReference {
  try {
    return compactReference(symbols, modulation);
  } catch (e) {
    if (!(e instanceof RangeError)) throw e;
    const prior = e instanceof ReferencePriorError;
    throw new InputError(
      { file },
      'reference',
      prior
        ? `symbols drawn with the ${modulation} prior`
        : `points of the ${modulation} constellation after the least-squares scaling (within a twentieth of a level spacing)`,
      e.message,
    );
  }
}

/** @throws InputError when the reference has fewer than {@link MIN_REFERENCE_SYMBOLS} symbols */
export function checkReferenceLength(symbols: DualPol, file: string): void {
  const n = symbols.x.length >> 1;
  if (n < MIN_REFERENCE_SYMBOLS) {
    throw new InputError({ file }, 'reference', `at least ${MIN_REFERENCE_SYMBOLS} symbols`, `${n}`);
  }
}

/**
 * Checks that reference symbols are symbols of the stated modulation, at any
 * scale: each polarization is scaled so that its largest component sits on
 * the outermost level (a genuine M-QAM pattern of at least 32 symbols uses
 * the outer levels with probability above 1 − 10^−7); every component must
 * then lie within {@link REFERENCE_POINT_TOLERANCE} of a level spacing of a
 * level, and every level must be used at least once over both axes and both
 * polarizations (a QPSK pattern also fits the corners of 16QAM: only the
 * levels it never uses tell them apart; a genuine 64QAM pattern of 32
 * symbols misses a level with probability 8·(7/8)^128 < 10^−6).
 * @throws InputError naming the file, the symbol (1-based) and the
 *   polarization of the first point off the constellation, or the levels never used
 * @example checkReferenceConstellation(ref, constellation('16qam'), 'tx-symbols.csv'); // throws InputError for a QPSK reference
 */
export function checkReferenceConstellation(symbols: DualPol, c: Constellation, file: string): void {
  const peak = (z: ComplexArray) => {
    let m = 0;
    for (let i = 0; i < z.length; i++) m = Math.max(m, Math.abs(z[i]));
    return m;
  };
  const check = new ConstellationCheck(c, file, [peak(symbols.x), peak(symbols.y)]);
  check.add(0, symbols.x, 0);
  check.add(1, symbols.y, 0);
  check.finish();
}

/**
 * {@link checkReferenceConstellation} over symbols given in chunks, with the
 * peaks known beforehand: `add` the chunks of both polarizations in any
 * interleaving, then `finish` throws what the whole-array check throws
 * first (polarization x before y, the first symbol off the constellation in
 * each, then the levels never used).
 */
class ConstellationCheck {
  private readonly used: Uint32Array;
  private readonly ringOfLabel: Uint8Array;
  private readonly bad: (string | null)[] = [null, null];

  constructor(
    private readonly c: Constellation,
    private readonly file: string,
    private readonly peaks: readonly number[],
  ) {
    this.used = new Uint32Array(c.grid !== null ? c.levelsPerAxis : c.ringRadii2.length);
    // Off a lattice the check counts rings: each label's ring, found once.
    this.ringOfLabel = new Uint8Array(c.order);
    for (let k = 0; k < c.order; k++) {
      const r2 = c.points[2 * k] ** 2 + c.points[2 * k + 1] ** 2;
      this.ringOfLabel[k] = c.ringRadii2.findIndex((x) => Math.abs(x - r2) < 1e-9);
    }
  }

  add(p: 0 | 1, z: ComplexArray, first: number): void {
    const { c } = this;
    if (this.bad[p] !== null || !(this.peaks[p] > 0)) return;
    // A shaped reference may never use its outermost level: the least-squares labelling checks its points.
    if (c.shaped) return;
    if (c.grid === null) {
      this.addPoints(p, z, first);
      return;
    }
    const l = c.levelsPerAxis;
    const spacing = 2 * c.scale;
    const g = ((l - 1) * c.scale) / this.peaks[p];
    const used = this.used;
    for (let k = 0; k < z.length >> 1; k++) {
      for (let part = 0; part < 2; part++) {
        const v = g * z[2 * k + part];
        const i = levelIndex(c, v);
        const off = Math.abs(v - (2 * i - (l - 1)) * c.scale) / spacing;
        if (!(off <= REFERENCE_POINT_TOLERANCE)) {
          this.bad[p] =
            `${first + k + 1}\u0000${z[2 * k]}${z[2 * k + 1] < 0 ? '' : '+'}${z[2 * k + 1]}j, ${off.toFixed(2)} of a spacing away`;
          return;
        }
        used[i]++;
      }
      // Cross QAM: the per-axis levels of a point must also meet at one of its points, not a corner.
      if (!c.square) {
        const cell = levelIndex(c, g * z[2 * k]) * l + levelIndex(c, g * z[2 * k + 1]);
        if (c.grid.cells[cell] < 0) {
          this.bad[p] =
            `${first + k + 1}\u0000${z[2 * k]}${z[2 * k + 1] < 0 ? '' : '+'}${z[2 * k + 1]}j, in a corner the cross leaves empty`;
          return;
        }
      }
    }
  }

  /**
   * Points off a lattice (8QAM): each polarization scaled so that its largest
   * component sits on the largest coordinate of the points; every symbol must
   * then lie within {@link REFERENCE_POINT_TOLERANCE} of the least distance
   * of a point (per axis), and every ring must be used.
   */
  private addPoints(p: 0 | 1, z: ComplexArray, first: number): void {
    const { c } = this;
    let top = 0;
    for (let i = 0; i < 2 * c.order; i++) top = Math.max(top, Math.abs(c.points[i]));
    const g = top / this.peaks[p];
    for (let k = 0; k < z.length >> 1; k++) {
      const re = g * z[2 * k];
      const im = g * z[2 * k + 1];
      const label = nearestLabel(c, re, im);
      const off = Math.max(Math.abs(re - c.points[2 * label]), Math.abs(im - c.points[2 * label + 1])) / c.minDistance;
      if (!(off <= REFERENCE_POINT_TOLERANCE)) {
        this.bad[p] =
          `${first + k + 1}\u0000${z[2 * k]}${z[2 * k + 1] < 0 ? '' : '+'}${z[2 * k + 1]}j, ${off.toFixed(2)} of the least distance away`;
        return;
      }
      this.used[this.ringOfLabel[label]]++;
    }
  }

  /** @throws InputError as {@link checkReferenceConstellation} */
  finish(): void {
    const { c, file } = this;
    for (const p of [0, 1] as const) {
      const pol = p === 0 ? 'x' : 'y';
      if (!(this.peaks[p] > 0)) throw new InputError({ file }, `reference polarization ${pol}`, `${c.name} symbols`, 'all zeros');
      const bad = this.bad[p];
      if (bad !== null) {
        const [symbol, received] = bad.split('\u0000');
        throw new InputError(
          { file },
          `reference symbol ${symbol}, polarization ${pol}`,
          c.grid !== null
            ? `a point of the ${c.name} constellation (after scaling, within ${REFERENCE_POINT_TOLERANCE} of a level spacing; is the modulation right?)`
            : `a point of the ${c.name} constellation (after scaling, within ${REFERENCE_POINT_TOLERANCE} of the least distance; is the modulation right?)`,
          received,
        );
      }
    }
    if (c.shaped) return;
    const l = this.used.length;
    const missing = [...this.used].filter((u) => u === 0).length;
    if (missing > 0) {
      throw new InputError(
        { file },
        'reference',
        c.grid !== null
          ? `symbols using all ${l} levels per axis of ${c.name} (is the modulation right?)`
          : `symbols using all ${l} rings of ${c.name} (is the modulation right?)`,
        `symbols using ${l - missing} of them`,
      );
    }
  }
}

/** Index of the nearest per-axis level of a square QAM (levels (2i − (L − 1))·scale). */
function levelIndex(c: Constellation, v: number): number {
  const l = c.levelsPerAxis;
  const i = Math.round((v / c.scale + (l - 1)) / 2);
  return Math.max(0, Math.min(l - 1, i));
}

/** Builds a DualPol from four columns (used by the Arrow reader). */
export function dualPolFromColumns(xr: Float64Array, xi: Float64Array, yr: Float64Array, yi: Float64Array): DualPol {
  const n = xr.length;
  const x = complexArray(n) as ComplexArray;
  const y = complexArray(n) as ComplexArray;
  for (let k = 0; k < n; k++) {
    x[2 * k] = xr[k];
    x[2 * k + 1] = xi[k];
    y[2 * k] = yr[k];
    y[2 * k + 1] = yi[k];
  }
  return { x, y };
}
