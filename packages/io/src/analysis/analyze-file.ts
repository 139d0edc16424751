import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import type { ReceiverSettings } from '@intradyne/core';
import {
  type AnalysisResult,
  type AnalyzeOptions,
  analyzeCapture,
  type InputHasher,
  type QualityFigures,
} from '@intradyne/metrics';
import { type CaptureDescription, openCapture } from '../capture/capture.js';
import { InputError } from '../errors/input-error.js';

/** What may change the receiver for one analysis (command-line options or a pipeline file). */
export interface AnalysisSettings {
  /** Descriptor fields that override the file's (sampleRate, symbolRate, modulation, rollOff, dispersionPsPerNm…). */
  readonly overrides?: Readonly<Record<string, unknown>>;
  /** Estimate the dispersion when the descriptor gives none (default true). */
  readonly estimateDispersion?: boolean;
  /** Receiver settings beyond the descriptor: stage options, expected DGD… (a pipeline file). */
  readonly receiver?: Partial<Omit<ReceiverSettings, 'modulation' | 'symbolRate' | 'sampleRate'>>;
  /** Options of the analysis itself (symbols left out, plot data…; see `analyzeCapture`). */
  readonly analysis?: AnalyzeOptions;
  /** Samples per block read from the file (default the loader's). */
  readonly blockSize?: number;
}

/** A capture and its analysis. */
export interface FileAnalysis {
  /** The capture as opened: its files and its descriptor with the overrides applied. */
  readonly capture: CaptureDescription;
  /** What `analyzeCapture` found: figures, diagnostics, failure, record. */
  readonly result: AnalysisResult;
}

/**
 * Opens a capture (data file or descriptor), streams it through the default
 * receiver and measures it against its reference.
 * @throws InputError for a missing or malformed file, descriptor or reference
 * @example const { result } = analyzeFile('run-07.csv', { overrides: { modulation: '16qam' } }); if (result.ok) console.log(result.measurement?.ber);
 */
export function analyzeFile(path: string, settings: AnalysisSettings = {}): FileAnalysis {
  return analyzeOpenCapture(openCapture(path, settings.overrides ?? {}), settings);
}

/**
 * {@link analyzeFile} on a capture already opened with {@link openCapture}
 * (with `settings.overrides`): for a caller that needs its name first.
 * @throws InputError for malformed data met while streaming
 */
export function analyzeOpenCapture(capture: CaptureDescription, settings: AnalysisSettings = {}): FileAnalysis {
  const receiver: ReceiverSettings = {
    ...settings.receiver,
    modulation: capture.modulation,
    symbolRate: capture.symbolRate,
    sampleRate: capture.sampleRate,
    rollOff: capture.rollOff,
    ...(capture.dispersionPsPerNm !== undefined ? { dispersionPsPerNm: capture.dispersionPsPerNm } : {}),
    ...(capture.descriptor.skewPs ? { skewPs: capture.descriptor.skewPs } : {}),
    estimateDispersion: settings.estimateDispersion ?? true,
  };
  // Read from the file again on each iteration: a data-aided analysis passes over the capture twice.
  const blocks = { [Symbol.iterator]: () => capture.blocks({ blockSize: settings.blockSize }) };
  const result = analyzeCapture(blocks, receiver, capture.reference, { inputHasher: nativeSha256, ...settings.analysis });
  return { capture, result };
}

/** Node's SHA-256 (the same digest as core's, several times faster over the samples). */
function nativeSha256(): InputHasher {
  const h = createHash('sha256');
  return {
    update: (bytes) => h.update(bytes),
    hex: () => h.digest('hex'),
  };
}

/**
 * Reads a pipeline file: JSON with optional `receiver` (stage options,
 * `expectedDgdPs`, `blindDispersion`) and `analysis` (`skipSymbols`,
 * `modulationTolerance`) objects.
 * @throws InputError naming the file for unreadable JSON or other keys
 */
export function readPipelineFile(path: string): Pick<AnalysisSettings, 'receiver' | 'analysis'> {
  let doc: unknown;
  try {
    doc = JSON.parse(readFileSync(path, 'utf8'));
  } catch (e) {
    throw new InputError({ file: path }, 'pipeline', 'a readable JSON file', (e as Error).message);
  }
  if (typeof doc !== 'object' || doc === null || Array.isArray(doc))
    throw new InputError({ file: path }, 'pipeline', 'a JSON object', typeof doc);
  for (const k of Object.keys(doc)) {
    if (k !== 'receiver' && k !== 'analysis')
      throw new InputError({ file: path }, `key '${k}'`, "only 'receiver' and 'analysis'", 'an unknown key');
  }
  return doc as Pick<AnalysisSettings, 'receiver' | 'analysis'>;
}

function figures(f: QualityFigures) {
  return {
    ber: f.ber,
    berCi95: f.berCi95,
    berIsUpperBound: f.berIsUpperBound,
    bitErrors: f.bitErrors,
    bits: f.bits,
    ser: f.ser,
    symbolErrors: f.symbolErrors,
    symbols: f.symbols,
    evmRms: f.evmRms,
    snrDb: f.snrDb,
    qDb: f.qDb,
    gmi: f.gmi,
    ngmi: f.ngmi,
    mi: f.mi,
    uncorrected: f.uncorrected,
    blockCorrected: f.blockCorrected,
  };
}

/**
 * The analysis as one plain JSON object (the `analyze --json` output): the
 * figures at the top level and per polarization, the frequency offset, the
 * slips, the penalty, every stage's diagnostics and the reproducibility
 * record. Figures are null when the analysis failed.
 * @example console.log(JSON.stringify(analysisToJson(analyzeFile('run-07.csv'))));
 */
export function analysisToJson({ capture, result }: FileAnalysis): Record<string, unknown> {
  const m = result.measurement;
  const none = {
    ber: null,
    berCi95: null,
    bitErrors: null,
    bits: null,
    ser: null,
    evmRms: null,
    snrDb: null,
    qDb: null,
    gmi: null,
    ngmi: null,
    mi: null,
  };
  const slipsOf = (p: 'x' | 'y') => result.cycleSlips[p].length;
  return plain({
    capture: capture.name,
    dataPath: capture.dataPath,
    modulation: capture.modulation,
    symbolRate: capture.symbolRate,
    sampleRate: capture.sampleRate,
    ok: result.ok,
    equalizerTraining: result.equalizerTraining,
    failure: result.failure,
    ...(m ? figures(m) : none),
    freqOffsetHz: result.freqOffsetHz,
    cycleSlips: result.cycleSlips.count,
    linewidthHz: result.linewidthHz,
    implementationPenaltyDb: result.implementationPenaltyDb,
    airBitsPerSecond: m?.airBitsPerSecond ?? null,
    perPol: m
      ? {
          x: { ...figures(m.perPol.x), freqOffsetHz: result.freqOffsetHz, cycleSlips: slipsOf('x') },
          y: { ...figures(m.perPol.y), freqOffsetHz: result.freqOffsetHz, cycleSlips: slipsOf('y') },
        }
      : null,
    sync: m?.sync ?? null,
    slipCorrection: m?.slipCorrection ?? null,
    modulationFit: result.modulationFit,
    slips: result.cycleSlips,
    diagnostics: result.diagnostics,
    record: result.record,
  }) as Record<string, unknown>;
}

/** Typed arrays to arrays, non-finite numbers to null, recursively: JSON-safe. */
function plain(v: unknown): unknown {
  if (typeof v === 'number') return Number.isFinite(v) ? v : null;
  if (ArrayBuffer.isView(v)) return Array.from(v as Float64Array, (x) => (Number.isFinite(x) ? x : null));
  if (Array.isArray(v)) return v.map(plain);
  if (v && typeof v === 'object') {
    const out: Record<string, unknown> = {};
    for (const [k, x] of Object.entries(v)) out[k] = plain(x);
    return out;
  }
  return v;
}
