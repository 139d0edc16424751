import { closeSync } from 'node:fs';
import { type ComplexArray, type Constellation, complexArray, type DualPol } from '@intradyne/core';
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
    blocks.push(b);
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
  const l = c.levelsPerAxis;
  const outer = (l - 1) * c.scale;
  const spacing = 2 * c.scale;
  const used = new Uint32Array(l);
  for (const [pol, z] of [
    ['x', symbols.x],
    ['y', symbols.y],
  ] as const) {
    const n = z.length >> 1;
    let peak = 0;
    for (let i = 0; i < 2 * n; i++) peak = Math.max(peak, Math.abs(z[i]));
    if (!(peak > 0)) throw new InputError({ file }, `reference polarization ${pol}`, `${c.name} symbols`, 'all zeros');
    const g = outer / peak;
    for (let k = 0; k < n; k++) {
      for (let part = 0; part < 2; part++) {
        const v = g * z[2 * k + part];
        const i = levelIndex(c, v);
        const off = Math.abs(v - (2 * i - (l - 1)) * c.scale) / spacing;
        if (!(off <= REFERENCE_POINT_TOLERANCE)) {
          throw new InputError(
            { file },
            `reference symbol ${k + 1}, polarization ${pol}`,
            `a point of the ${c.name} constellation (after scaling, within ${REFERENCE_POINT_TOLERANCE} of a level spacing; is the modulation right?)`,
            `${z[2 * k]}${z[2 * k + 1] < 0 ? '' : '+'}${z[2 * k + 1]}j, ${off.toFixed(2)} of a spacing away`,
          );
        }
        used[i]++;
      }
    }
  }
  const missing = [...used].filter((u) => u === 0).length;
  if (missing > 0) {
    throw new InputError(
      { file },
      'reference',
      `symbols using all ${l} levels per axis of ${c.name} (is the modulation right?)`,
      `symbols using ${l - missing} of them`,
    );
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
