import { constellation } from '@intradyne/core';
import type { ErrorFigures, QualityFigures } from '@intradyne/metrics';
import type { FileAnalysis } from '../analysis/analyze-file.js';

/**
 * The one description of the figures an analysis reports: each figure's
 * JSON key, results-table column, kind, unit and meaning, and where its
 * value comes from. The `analyze --json` object, its JSON Schema, the
 * results table's columns (CSV and Arrow, with their types), the command's
 * summary, the demo and the report are all made from these lists, so a new
 * figure is one entry here.
 */

/** What a figure holds; its JSON type, Arrow type and CSV text follow from it. */
export type FigureKind = 'text' | 'boolean' | 'integer' | 'number' | 'interval' | 'counts';

/** A value a figure takes (an interval as [lower, upper], error counts as an object). */
export type FigureValue = number | string | boolean | readonly [number, number] | ErrorCountsJson | null;

/** Error counts as the JSON holds them (see `ErrorFigures`). */
export interface ErrorCountsJson {
  /** Bit error ratio (the upper end of its interval without errors). */
  readonly ber: number | null;
  /** Its Clopper–Pearson 95 % interval. */
  readonly berCi95: readonly [number, number] | null;
  /** True when no bit error was counted. */
  readonly berIsUpperBound: boolean;
  /** Bit errors counted. */
  readonly bitErrors: number;
  /** Symbol error ratio. */
  readonly ser: number | null;
  /** Its Clopper–Pearson 95 % interval. */
  readonly serCi95: readonly [number, number] | null;
  /** Symbol errors counted. */
  readonly symbolErrors: number;
}

/** One figure, read from a source of type `S`. */
export interface Figure<S> {
  /** The key in the JSON object (camelCase). */
  readonly key: string;
  /**
   * The results-table column (snake_case), or null when the table does not
   * carry it; an interval has two, `<column>_lo` and `<column>_hi`.
   */
  readonly column: string | null;
  /** For a quality figure: whether the table also has it per polarization (`x_<column>`, `y_<column>`). */
  readonly perPolColumn?: boolean;
  /** What it holds. */
  readonly kind: FigureKind;
  /** Its unit ('' for a pure number or ratio; 'fraction' for EVM). */
  readonly unit: string;
  /** What it means, in a sentence (the JSON Schema's description). */
  readonly description: string;
  /** The value from its source; null when unknown or not finite. */
  readonly value: (source: S) => FigureValue;
}

const finite = (v: number | null): number | null => (v !== null && Number.isFinite(v) ? v : null);
const interval = (i: readonly [number, number]): readonly [number, number] | null =>
  Number.isFinite(i[0]) && Number.isFinite(i[1]) ? [i[0], i[1]] : null;
const counts = (e: ErrorFigures): ErrorCountsJson => ({
  ber: finite(e.ber),
  berCi95: interval(e.berCi95),
  berIsUpperBound: e.berIsUpperBound,
  bitErrors: e.bitErrors,
  ser: finite(e.ser),
  serCi95: interval(e.serCi95),
  symbolErrors: e.symbolErrors,
});

/**
 * The measured figures, for the totals and for each polarization (null in
 * every output when the analysis failed). Bit and symbol counts of the
 * totals pool both polarizations; GMI, NGMI and MI are bits per symbol per
 * polarization.
 */
export const QUALITY_FIGURES: readonly Figure<QualityFigures>[] = [
  {
    key: 'ber',
    column: 'ber',
    perPolColumn: true,
    kind: 'number',
    unit: '',
    description: 'Bit error ratio; with no bit error counted, the upper end of its 95 % interval (berIsUpperBound)',
    value: (f) => finite(f.ber),
  },
  {
    key: 'berIsUpperBound',
    column: 'ber_is_upper_bound',
    perPolColumn: true,
    kind: 'boolean',
    unit: '',
    description: 'True when no bit error was counted and ber is the upper end of its 95 % interval',
    value: (f) => f.berIsUpperBound,
  },
  {
    key: 'berCi95',
    column: 'ber_ci95',
    kind: 'interval',
    unit: '',
    description: 'Clopper–Pearson 95 % interval of the BER, [lower, upper]',
    value: (f) => interval(f.berCi95),
  },
  {
    key: 'bitErrors',
    column: 'bit_errors',
    kind: 'integer',
    unit: '',
    description: 'Bit errors counted',
    value: (f) => f.bitErrors,
  },
  { key: 'bits', column: 'bits', kind: 'integer', unit: '', description: 'Bits compared', value: (f) => f.bits },
  {
    key: 'ser',
    column: 'ser',
    kind: 'number',
    unit: '',
    description: 'Symbol error ratio; with no symbol error counted, the upper end of its 95 % interval',
    value: (f) => finite(f.ser),
  },
  {
    key: 'serCi95',
    column: null,
    kind: 'interval',
    unit: '',
    description: 'Clopper–Pearson 95 % interval of the SER, [lower, upper]',
    value: (f) => interval(f.serCi95),
  },
  {
    key: 'symbolErrors',
    column: null,
    kind: 'integer',
    unit: '',
    description: 'Symbol errors counted',
    value: (f) => f.symbolErrors,
  },
  { key: 'symbols', column: null, kind: 'integer', unit: '', description: 'Symbols compared', value: (f) => f.symbols },
  {
    key: 'evmRms',
    column: 'evm_rms',
    kind: 'number',
    unit: 'fraction',
    description: 'Data-aided rms error vector magnitude, a fraction of the reference (not per cent)',
    value: (f) => finite(f.evmRms),
  },
  {
    key: 'snrDb',
    column: 'snr_db',
    perPolColumn: true,
    kind: 'number',
    unit: 'dB',
    description: 'Signal-to-noise ratio per symbol (Es/N0) of the fitted Gaussian channel, dB',
    value: (f) => finite(f.snrDb),
  },
  {
    key: 'snrFromEvmDb',
    column: null,
    kind: 'number',
    unit: 'dB',
    description: 'The SNR as 1/EVM², dB',
    value: (f) => finite(f.snrFromEvmDb),
  },
  {
    key: 'qDb',
    column: 'q_db',
    kind: 'number',
    unit: 'dB',
    description: 'Q factor from the BER, 20·log10(√2·erfc⁻¹(2·BER)), dB; a lower bound when the BER is an upper bound',
    value: (f) => finite(f.qDb),
  },
  {
    key: 'qIsLowerBound',
    column: 'q_db_is_lower_bound',
    kind: 'boolean',
    unit: '',
    description: 'True when qDb is computed from an upper bound of the BER, and so is a lower bound (null without a Q)',
    value: (f) => (f.qDb === null ? null : f.berIsUpperBound),
  },
  {
    key: 'gmi',
    column: 'gmi',
    perPolColumn: true,
    kind: 'number',
    unit: 'bit',
    description: 'Generalized mutual information, bits per symbol per polarization',
    value: (f) => finite(f.gmi),
  },
  {
    key: 'ngmi',
    column: 'ngmi',
    kind: 'number',
    unit: '',
    description:
      'Normalized GMI: GMI over the bits per symbol log2 M; for a shaped format 1 − (entropy − GMI)/log2 M (the same for a uniform one)',
    value: (f) => finite(f.ngmi),
  },
  {
    key: 'mi',
    column: 'mi',
    kind: 'number',
    unit: 'bit',
    description: 'Mutual information of the symbols, bits per symbol per polarization',
    value: (f) => finite(f.mi),
  },
  {
    key: 'uncorrected',
    column: null,
    kind: 'counts',
    unit: '',
    description: "The error counts with the first block's quarter turn for the whole stream (no slip correction)",
    value: (f) => counts(f.uncorrected),
  },
  {
    key: 'blockCorrected',
    column: null,
    kind: 'counts',
    unit: '',
    description: 'The error counts with each block at its own best quarter turn (the slip correction)',
    value: (f) => counts(f.blockCorrected),
  },
];

/** A polarization of an analysis: the source of {@link POLARIZATION_FIGURES}. */
export interface PolarizationOf {
  /** The analysis. */
  readonly analysis: FileAnalysis;
  /** The received polarization. */
  readonly pol: 'x' | 'y';
}

/** The per-polarization figures beyond the quality figures, read from the analysis and a polarization. */
export const POLARIZATION_FIGURES: readonly Figure<PolarizationOf>[] = [
  {
    key: 'freqOffsetHz',
    column: null,
    kind: 'number',
    unit: 'Hz',
    description: 'The carrier frequency offset (common to both polarizations), Hz',
    value: ({ analysis }) => finite(analysis.result.freqOffsetHz),
  },
  {
    key: 'cycleSlips',
    column: null,
    kind: 'integer',
    unit: '',
    description: "Cycle slips of this polarization found against the synchronized reference (the same count as 'slips')",
    value: ({ analysis, pol }) => analysis.result.cycleSlips[pol].length,
  },
];

/** The linewidth as the outputs show it. */
export interface PresentedLinewidth {
  /** The estimate, Hz; null when not estimated or at or below zero. */
  readonly linewidthHz: number | null;
  /** True when the estimate came out at or below zero. */
  readonly linewidthBelowResolution: boolean;
}

/**
 * The linewidth as a figure: the estimate when it is positive, else null (a
 * statistical estimate at or below zero says the phase noise is below what
 * it resolves, not a negative linewidth).
 * @example presentedLinewidth(-1200) // { linewidthHz: null, linewidthBelowResolution: true }
 */
export function presentedLinewidth(estimateHz: number): PresentedLinewidth {
  if (Number.isFinite(estimateHz) && estimateHz <= 0) return { linewidthHz: null, linewidthBelowResolution: true };
  return { linewidthHz: Number.isFinite(estimateHz) ? estimateHz : null, linewidthBelowResolution: false };
}

/** The figures of the analysis as a whole (present, as far as estimated, when it failed too). */
export const ANALYSIS_FIGURES: readonly Figure<FileAnalysis>[] = [
  {
    key: 'freqOffsetHz',
    column: 'freq_offset_hz',
    kind: 'number',
    unit: 'Hz',
    description: 'Carrier offset from the local oscillator, Hz, signed so that the received x rotates as exp(+j·2π·f·t)',
    value: ({ result }) => finite(result.freqOffsetHz),
  },
  {
    key: 'cycleSlips',
    column: 'cycle_slips',
    kind: 'integer',
    unit: '',
    description: 'Cycle slips of both polarizations found against the synchronized reference (0 when it was not found)',
    value: ({ result }) => result.cycleSlips.count,
  },
  {
    key: 'linewidthHz',
    column: null,
    kind: 'number',
    unit: 'Hz',
    description: 'Combined laser linewidth estimated from the recovered phase, Hz; null when not estimated or below resolution',
    value: ({ result }) => presentedLinewidth(result.linewidthHz).linewidthHz,
  },
  {
    key: 'linewidthBelowResolution',
    column: null,
    kind: 'boolean',
    unit: '',
    description: "True when the linewidth estimate came out at or below zero: below the estimate's resolution",
    value: ({ result }) => presentedLinewidth(result.linewidthHz).linewidthBelowResolution,
  },
  {
    key: 'implementationPenaltyDb',
    column: 'implementation_penalty_db',
    kind: 'number',
    unit: 'dB',
    description:
      'Measured SNR minus the SNR AWGN theory needs for the measured BER (Cho & Yoon 2002 for square QAM), dB, null without errors; for a shaped format, for the measured GMI',
    value: ({ result }) => finite(result.implementationPenaltyDb),
  },
  {
    key: 'entropy',
    column: 'entropy',
    kind: 'number',
    unit: 'bit',
    description:
      "Entropy of the transmitted symbols' prior, bits per symbol per polarization (log2 M for a uniform format; below it for a shaped one)",
    value: ({ capture }) => constellation(capture.modulation).entropy,
  },
  {
    key: 'airBitsPerSecond',
    column: 'air_bit_per_s',
    kind: 'number',
    unit: 'bit/s',
    description: 'Achievable information rate, (GMIx + GMIy)·Rs, bit/s',
    value: ({ result }) => finite(result.measurement?.airBitsPerSecond ?? null),
  },
];

/** The capture and the outcome, ahead of the figures in every output. */
export const CAPTURE_FIGURES: readonly Figure<FileAnalysis>[] = [
  {
    key: 'modulation',
    column: 'modulation',
    kind: 'text',
    unit: '',
    description: 'The modulation analysed',
    value: ({ capture }) => capture.modulation,
  },
  {
    key: 'symbolRate',
    column: 'symbol_rate_bd',
    kind: 'number',
    unit: 'Bd',
    description: 'Symbol rate, Bd',
    value: ({ capture }) => capture.symbolRate,
  },
  {
    key: 'sampleRate',
    column: 'sample_rate_sas',
    kind: 'number',
    unit: 'Sa/s',
    description: 'Scope sample rate, Sa/s',
    value: ({ capture }) => capture.sampleRate,
  },
  {
    key: 'ok',
    column: 'ok',
    kind: 'boolean',
    unit: '',
    description: 'True when every check passed and the figures are valid',
    value: ({ result }) => result.ok,
  },
];

/** The kind of a results-table column's cells. */
export type ColumnKind = 'text' | 'boolean' | 'integer' | 'number';

/** A results-table column: its name and kind. */
export interface ResultColumnSpec {
  /** The column's name (snake_case). */
  readonly name: string;
  /** What its cells hold (Arrow: Utf8, Bool, Int64 or Float64). */
  readonly kind: ColumnKind;
}

function columnsOf<S>(figures: readonly Figure<S>[], prefix = '', only?: (f: Figure<S>) => boolean): ResultColumnSpec[] {
  return figures.flatMap((f) => {
    if (f.column === null || (only && !only(f))) return [];
    if (f.kind === 'interval')
      return [
        { name: `${prefix}${f.column}_lo`, kind: 'number' as const },
        { name: `${prefix}${f.column}_hi`, kind: 'number' as const },
      ];
    return [{ name: `${prefix}${f.column}`, kind: f.kind as ColumnKind }];
  });
}

/**
 * The results table's columns in order: the capture's key, the capture and
 * outcome, the failure and warnings, the total figures, the analysis
 * figures, the per-polarization ones, and the fingerprints.
 */
export const RESULT_COLUMN_SPECS: readonly ResultColumnSpec[] = [
  { name: 'capture', kind: 'text' },
  ...columnsOf(CAPTURE_FIGURES),
  { name: 'failure_check', kind: 'text' },
  { name: 'failure_reason', kind: 'text' },
  { name: 'warnings', kind: 'text' },
  ...columnsOf(QUALITY_FIGURES),
  ...columnsOf(ANALYSIS_FIGURES),
  ...(['x', 'y'] as const).flatMap((p) => columnsOf(QUALITY_FIGURES, `${p}_`, (f) => f.perPolColumn === true)),
  { name: 'input_sha256', kind: 'text' },
  { name: 'samples_sha256', kind: 'text' },
  { name: 'pipeline_sha256', kind: 'text' },
];

/** The cells a figure gives a results row. */
export function figureCells<S>(f: Figure<S>, source: S | null, prefix = ''): [string, FigureValue][] {
  if (f.column === null) return [];
  const v = source === null ? null : f.value(source);
  if (f.kind === 'interval') {
    const i = v as readonly [number, number] | null;
    return [
      [`${prefix}${f.column}_lo`, i?.[0] ?? null],
      [`${prefix}${f.column}_hi`, i?.[1] ?? null],
    ];
  }
  return [[`${prefix}${f.column}`, v]];
}

/** The figures of one source as JSON entries, in order (every key present; null where unknown). */
export function figureEntries<S>(figures: readonly Figure<S>[], source: S | null): Record<string, FigureValue> {
  const out: Record<string, FigureValue> = {};
  for (const f of figures) out[f.key] = source === null ? null : f.value(source);
  return out;
}
