import type { QualityFigures } from '@intradyne/metrics';

/** Writes a number for a table cell at a column's precision ('–' for an unknown one). */
export type NumberText = (v: number | null, digits: number) => string;

/** One column of the figures table that the command's summary, the report and the demo show. */
export interface FigureColumn {
  /** The heading, with its unit. */
  readonly heading: string;
  /** The cell of one row of figures (total or a polarization), numbers written by `number`. */
  readonly cell: (f: QualityFigures, number: NumberText) => string;
}

/**
 * The figures table, one row for the totals and one per polarization. A
 * BER without errors is the upper end of its interval, marked '<', and the
 * Q computed from it a lower bound, marked '>'.
 */
export const FIGURE_COLUMNS: readonly FigureColumn[] = [
  { heading: 'BER', cell: (f, n) => `${f.berIsUpperBound ? '< ' : ''}${n(f.ber, 3)}` },
  { heading: '95 % interval', cell: (f, n) => `${n(f.berCi95[0], 3)} – ${n(f.berCi95[1], 3)}` },
  { heading: 'errors/bits', cell: (f) => `${f.bitErrors}/${f.bits}` },
  { heading: 'EVM %', cell: (f, n) => n(100 * f.evmRms, 2) },
  { heading: 'SNR dB', cell: (f, n) => n(f.snrDb, 2) },
  { heading: 'Q dB', cell: (f, n) => `${f.berIsUpperBound && f.qDb !== null ? '> ' : ''}${n(f.qDb, 2)}` },
  { heading: 'GMI b', cell: (f, n) => n(f.gmi, 3) },
  { heading: 'NGMI', cell: (f, n) => n(f.ngmi, 4) },
];

/**
 * A number in the command's tables: fixed at the column's digits, the very
 * small (below 0.01) in exponent form, '–' when unknown.
 * @example textNumber(3.2e-4, 3) // '3.20e-4'
 */
export function textNumber(v: number | null | undefined, digits = 3): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '–';
  return Math.abs(v) < 1e-2 && v !== 0 ? v.toExponential(2) : v.toFixed(digits);
}

/** The columns of {@link FIGURE_COLUMNS} with these headings, in its order. */
export function figureColumns(...headings: string[]): FigureColumn[] {
  const chosen = FIGURE_COLUMNS.filter((c) => headings.includes(c.heading));
  if (chosen.length !== headings.length) throw new RangeError(`figureColumns: no column among ${headings.join(', ')}`);
  return chosen;
}

/** The note under a table whose BER is a bound. */
export const BOUND_NOTE = 'no bit error counted: "<" marks the upper end of the 95 % interval, ">" the Q from it';

/** The headings and rows (total, x, y) of the figures table. */
export function figureRows(
  m: QualityFigures & { readonly perPol: { readonly x: QualityFigures; readonly y: QualityFigures } },
  number: NumberText,
): { headings: string[]; rows: string[][] } {
  const row = (label: string, f: QualityFigures) => [label, ...FIGURE_COLUMNS.map((c) => c.cell(f, number))];
  return {
    headings: ['', ...FIGURE_COLUMNS.map((c) => c.heading)],
    rows: [row('total', m), row('x', m.perPol.x), row('y', m.perPol.y)],
  };
}
