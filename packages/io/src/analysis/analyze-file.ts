import { createHash } from 'node:crypto';
import type { InputHasher, ReceiverSettings } from '@intradyne/core';
import { type AnalysisResult, type AnalyzeOptions, analyzeCapture } from '@intradyne/metrics';
import { type CaptureDescription, openCapture } from '../capture/capture.js';
import { InputError } from '../errors/input-error.js';
import { UsageError } from '../errors/usage-error.js';
import { worthHelperThreads } from '../threads/helper-threads.js';
import { SpectrumAccumulator } from './spectrum-estimate.js';

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
  /**
   * Parse a large capture on a thread of its own while the receiver runs (default
   * true, for files of 32 MB and more): the same results, sooner on a machine with
   * a core to spare.
   */
  readonly helperThreads?: boolean;
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
 *
 * Two failures of the analysis are the input's, and are thrown as such
 * rather than returned as a failed analysis: a capture too short to measure
 * with the default lead-in (the data file named, with its length; with
 * `analysis.skipSymbols` set, the failure stays the analysis's), and a stated symbol rate that
 * the data do not carry — checked only after the analysis failed (any check
 * but the reference's, which a wrong rate does not explain), by estimating the
 * symbol rate from the spectrum of the first {@link RATE_CHECK_SAMPLES}
 * samples; more than {@link RATE_MISMATCH} away from the stated one, the
 * descriptor's field (or the option) is named with both rates.
 * @throws InputError for malformed data met while streaming, a capture too
 *   short to measure, or rates the data do not fit; UsageError when the
 *   symbol rate that does not fit came from an option
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
  // A large capture is parsed on a thread of its own while the receiver runs.
  const threads = (settings.helperThreads ?? true) && worthHelperThreads(capture.dataPath);
  // Read from the file again on each iteration: a data-aided analysis passes over the capture twice.
  const blocks = { [Symbol.iterator]: () => capture.blocks({ blockSize: settings.blockSize, parseAhead: threads }) };
  const result = analyzeCapture(blocks, receiver, capture.reference, { inputHasher: nativeSha256, ...settings.analysis });
  // The rates first: a wrong symbol rate also makes a capture look short in symbols.
  if (!result.ok && result.failure?.check !== 'reference') checkRatesFit(capture, result.failure?.reason ?? '');
  // Too short for the default lead-in: the capture is at fault, whichever check noticed it first (ten samples
  // make the equalizer fail before the length is checked). With a lead-in chosen by the caller, the analysis
  // failed for that choice, and says so.
  if (!result.ok && settings.analysis?.skipSymbols === undefined) {
    const samples = result.record.samples;
    const symbols = Math.floor(samples / capture.samplesPerSymbol);
    const { skipSymbols, skipTailSymbols } = result.record.analysis;
    if (result.failure?.check === 'length' || symbols <= skipSymbols + skipTailSymbols)
      throw new InputError(
        { file: capture.dataPath },
        'data',
        `a capture long enough to measure (more than ${skipSymbols + skipTailSymbols} symbols: ${skipSymbols} leading ones are left out while the receiver settles, ${skipTailSymbols} trailing)`,
        `${samples} samples (${symbols} symbols at ${capture.samplesPerSymbol} samples per symbol)`,
      );
  }
  return { capture, result };
}

/** Samples of a capture whose spectrum checks the stated symbol rate after a failed analysis: 2^18. */
export const RATE_CHECK_SAMPLES = 1 << 18;

/**
 * Largest relative difference between the stated symbol rate and the one
 * the spectrum shows before the rates are blamed: 0.25. The estimate is
 * within a few per cent on raised-cosine signals of 2,000 symbols or more
 * (inspect's tests), so a quarter leaves room for filtered or noisy captures.
 */
export const RATE_MISMATCH = 0.25;

/**
 * After a failed analysis: throws when the spectrum of the data shows a
 * symbol rate far from the stated one (see {@link analyzeOpenCapture}).
 */
function checkRatesFit(capture: CaptureDescription, failure: string): void {
  const spectrum = new SpectrumAccumulator();
  for (const b of capture.blocks()) {
    spectrum.push(b);
    if (spectrum.samples >= RATE_CHECK_SAMPLES) break;
  }
  const seen = spectrum.result()?.symbolRateBd ?? null;
  if (seen === null || Math.abs(seen / capture.symbolRate - 1) <= RATE_MISMATCH) return;
  const expected =
    `a symbol rate the data carry (the analysis failed: ${failure.split(':')[0]}; at the stated ${capture.sampleRate} Sa/s ` +
    `the spectrum of the data shows about ${(seen / 1e9).toPrecision(3)} GBd: check the symbol rate and the sample rate)`;
  const origin = capture.origin('symbolRate');
  if ('option' in origin) throw new UsageError(`${origin.option}: expected ${expected}, received ${capture.symbolRate}`);
  throw new InputError(origin, "field 'symbolRate'", expected, String(capture.symbolRate));
}

/** Node's SHA-256 (the same digest as core's, several times faster over the samples). */
function nativeSha256(): InputHasher {
  const h = createHash('sha256');
  return {
    update: (bytes) => h.update(bytes),
    hex: () => h.digest('hex'),
  };
}
