import { existsSync } from 'node:fs';
import { extname } from 'node:path';
import { CHANNEL_NAMES, type ChannelBlock, type ChannelName, type SpectrumSummary } from '@intradyne/core';
import { MIN_SPECTRUM_SAMPLES, SpectrumAccumulator } from '../analysis/spectrum-estimate.js';
import { readArrowCapture } from '../arrow/arrow-capture.js';
import { descriptorPathFor, openCapture, resolveDataPath } from '../capture/capture.js';
import { LIMITS } from '../capture/limits.js';
import { InputError } from '../errors/input-error.js';
import { readCsvCapture } from '../load/csv-capture.js';
import { parseCommandArgs, positiveInteger, positiveNumber } from './args.js';
import { UsageError } from './errors.js';

export const INSPECT_HELP = `intradyne inspect CAPTURE [options]

Reads a capture (a .csv, .arrow or .arrows data file, or its .json
descriptor) and prints per-channel statistics (mean or DC, rms, standard
deviation, min, max, clipping), a power-spectrum summary (Welch) and the
symbol rate estimated from the spectrum.

Clipping is the fraction of samples sitting exactly on the smallest or the
largest value of the channel (the ADC rails), counting a rail only when more
than one sample sits on it.

The symbol rate is the signal power above the noise floor divided by the
in-band plateau level: for a raised-cosine spectrum that ratio is the symbol
rate whatever the roll-off (valid for roll-offs up to 0.5). The half-power
(-3 dB) bandwidth, which is also the symbol rate for such a spectrum, is
printed beside it. A spectrum with no band (all zeros, a constant level, a
pure tone) gives no estimate, and the reason is printed instead.

The descriptor, when present, gives the sample rate and is validated with its
reference; without one, the sample rate comes from a time column or from
--sample-rate.

Options:
  --sample-rate SA/S   sample rate, overriding the descriptor
  --segment N          Welch segment length, 8 to ${LIMITS.maxSegmentLength} (default 1024, fewer for short captures)
  --json               print one JSON object
  -h, --help           this text
`;

/** Running statistics of one channel. */
interface ChannelStats {
  count: number;
  sum: number;
  sumSquares: number;
  min: number;
  max: number;
  atMin: number;
  atMax: number;
}

function newStats(): ChannelStats {
  return {
    count: 0,
    sum: 0,
    sumSquares: 0,
    min: Number.POSITIVE_INFINITY,
    max: Number.NEGATIVE_INFINITY,
    atMin: 0,
    atMax: 0,
  };
}

function accumulate(s: ChannelStats, v: Float64Array): void {
  let { sum, sumSquares, min, max, atMin, atMax } = s;
  for (let i = 0; i < v.length; i++) {
    const x = v[i];
    sum += x;
    sumSquares += x * x;
    // Count the samples on the current extremes; a new extreme restarts the count.
    if (x < min) {
      min = x;
      atMin = 1;
    } else if (x === min) atMin++;
    if (x > max) {
      max = x;
      atMax = 1;
    } else if (x === max) atMax++;
  }
  Object.assign(s, { sum, sumSquares, min, max, atMin, atMax, count: s.count + v.length });
}

/** Statistics of a channel, in the channel's units. */
export interface ChannelSummary {
  readonly mean: number;
  readonly rms: number;
  readonly std: number;
  readonly min: number;
  readonly max: number;
  /** Fraction of samples on a rail (see the command's help). */
  readonly clipped: number;
}

function summarize(s: ChannelStats): ChannelSummary {
  const mean = s.sum / s.count;
  const ms = s.sumSquares / s.count;
  const railed = (s.atMin > 1 ? s.atMin : 0) + (s.atMax > 1 && s.max !== s.min ? s.atMax : 0);
  return {
    mean,
    rms: Math.sqrt(ms),
    std: Math.sqrt(Math.max(0, ms - mean * mean)),
    min: s.min,
    max: s.max,
    clipped: railed / s.count,
  };
}

/** What `inspect` reports. */
export interface InspectReport {
  /** Path of the data file. */
  readonly capture: string;
  /** Its format. */
  readonly format: 'csv' | 'arrow';
  /** Path of the descriptor, or null when there is none. */
  readonly descriptor: string | null;
  /** Samples per channel. */
  readonly samples: number;
  /** Sa/s. */
  readonly sampleRate: number;
  /** Length of the capture, s. */
  readonly durationS: number;
  /** DC, rms, extremes and clipping of each channel. */
  readonly channels: Readonly<Record<ChannelName, ChannelSummary>>;
  /** Summary of the Welch power spectrum of x = xi + j·xq and y; its figures are null when the spectrum holds no band. */
  readonly spectrum: { readonly [K in keyof SpectrumSummary]: number | null } & {
    /** Samples per Welch segment. */
    readonly segmentLength: number;
    /** Segments averaged. */
    readonly segments: number;
    /** Frequency resolution, Hz. */
    readonly resolutionHz: number;
  };
  /** The symbol rate seen in the spectrum, against the descriptor's. */
  readonly symbolRate: {
    /** Estimated symbol rate, Bd, or null when the spectrum holds no band. */
    readonly estimateBd: number | null;
    /** Why there is no estimate (all zeros, a constant level, a tone), or null. */
    readonly reason: string | null;
    /** How it was estimated, in words. */
    readonly method: string;
    /** The descriptor's symbol rate, Bd, or null without a descriptor. */
    readonly statedBd: number | null;
    /** (estimate − stated) / stated, or null without a descriptor or an estimate. */
    readonly relativeDifference: number | null;
  };
}

/**
 * Inspects a capture, streaming it once (memory: a block and the spectrum accumulators).
 * @throws InputError for bad input; UsageError when the capture is shorter than 64 samples
 * @example inspectCapture('lab/run-07.csv').symbolRate.estimateBd
 */
export function inspectCapture(path: string, options: { sampleRate?: number; segmentLength?: number } = {}): InspectReport {
  const dataPath = resolveDataPath(path);
  const format = extname(dataPath).toLowerCase() === '.csv' ? 'csv' : 'arrow';
  const sidecar = descriptorPathFor(dataPath);
  let blocks: Iterable<ChannelBlock>;
  let stated: number | null = null;
  if (existsSync(sidecar)) {
    const c = openCapture(dataPath, options.sampleRate !== undefined ? { sampleRate: options.sampleRate } : {});
    blocks = c.blocks();
    stated = c.symbolRate;
  } else {
    blocks =
      format === 'csv'
        ? readCsvCapture(dataPath, { sampleRate: options.sampleRate })
        : readArrowCapture(dataPath, { sampleRate: options.sampleRate });
  }
  const stats = Object.fromEntries(CHANNEL_NAMES.map((c) => [c, newStats()])) as Record<ChannelName, ChannelStats>;
  const spectrum = new SpectrumAccumulator(options.segmentLength ?? 1024);
  let sampleRate = Number.NaN;
  for (const b of blocks) {
    sampleRate = b.sampleRate;
    for (const c of CHANNEL_NAMES) accumulate(stats[c], b[c]);
    spectrum.push(b);
  }
  const samples = stats.xi.count;
  const s = spectrum.result();
  if (s === null) {
    throw new InputError({ file: dataPath }, 'data', `at least ${MIN_SPECTRUM_SAMPLES} samples for a spectrum`, `${samples}`);
  }
  const estimate = s.symbolRateBd;
  const summary = s.summary ?? NO_SUMMARY;
  return {
    capture: dataPath,
    format,
    descriptor: existsSync(sidecar) ? sidecar : null,
    samples,
    sampleRate,
    durationS: samples / sampleRate,
    channels: Object.fromEntries(CHANNEL_NAMES.map((c) => [c, summarize(stats[c])])) as Record<ChannelName, ChannelSummary>,
    spectrum: { ...summary, segmentLength: s.segmentLength, segments: s.segments, resolutionHz: s.resolutionHz },
    symbolRate: {
      estimateBd: estimate,
      reason: s.reason,
      method: 'power above the noise floor / in-band plateau level (raised-cosine area), Welch PSD of x and y',
      statedBd: stated,
      relativeDifference: stated === null || estimate === null ? null : estimate / stated - 1,
    },
  };
}

/** The spectrum's figures when it holds no band to summarize. */
const NO_SUMMARY: { readonly [K in keyof SpectrumSummary]: null } = {
  noiseFloor: null,
  plateau: null,
  plateauToFloorDb: null,
  halfPowerLowHz: null,
  halfPowerHighHz: null,
  bandwidth3dBHz: null,
  centreHz: null,
  occupiedLowHz: null,
  occupiedHighHz: null,
  occupiedBandwidthHz: null,
  symbolRateBd: null,
};

const ghz = (v: number | null) => (v === null ? '–' : `${(v / 1e9).toFixed(3)} GHz`);
const num = (v: number) => (Math.abs(v) >= 1e-3 || v === 0 ? v.toFixed(4) : v.toExponential(3));

function text(r: InspectReport): string {
  const lines = [
    `capture      ${r.capture} (${r.format})`,
    `descriptor   ${r.descriptor ?? 'none'}`,
    `samples      ${r.samples} per channel, ${(r.sampleRate / 1e9).toFixed(3)} GSa/s, ${(r.durationS * 1e6).toFixed(3)} µs`,
    '',
    'channel      mean (DC)        rms        std        min        max   clipped',
    ...CHANNEL_NAMES.map((c) => {
      const s = r.channels[c];
      return `${c.padEnd(8)} ${[s.mean, s.rms, s.std, s.min, s.max].map((v) => num(v).padStart(10)).join(' ')}  ${(100 * s.clipped).toFixed(3).padStart(7)} %`;
    }),
    '',
    `spectrum     Welch, ${r.spectrum.segmentLength}-point Hann segments, ${r.spectrum.segments} averaged, ${(r.spectrum.resolutionHz / 1e6).toFixed(1)} MHz bins`,
    ...(r.spectrum.bandwidth3dBHz === null
      ? []
      : [
          `  -3 dB band   ${ghz(r.spectrum.halfPowerLowHz)} to ${ghz(r.spectrum.halfPowerHighHz)} (width ${ghz(r.spectrum.bandwidth3dBHz)}, centre ${ghz(r.spectrum.centreHz)})`,
          `  99 % band    ${ghz(r.spectrum.occupiedLowHz)} to ${ghz(r.spectrum.occupiedHighHz)} (width ${ghz(r.spectrum.occupiedBandwidthHz)}, power above the floor)`,
          `  plateau/floor ${r.spectrum.plateauToFloorDb !== null && Number.isFinite(r.spectrum.plateauToFloorDb) ? `${r.spectrum.plateauToFloorDb.toFixed(1)} dB` : 'no out-of-band floor'}`,
        ]),
    r.symbolRate.estimateBd === null
      ? `symbol rate  not estimated: ${r.symbolRate.reason}`
      : `symbol rate  ${(r.symbolRate.estimateBd / 1e9).toFixed(3)} GBd estimated${
          r.symbolRate.statedBd === null
            ? ''
            : ` (descriptor ${(r.symbolRate.statedBd / 1e9).toFixed(3)} GBd, ${(100 * (r.symbolRate.relativeDifference ?? 0)).toFixed(2)} %)`
        }`,
  ];
  return `${lines.join('\n')}\n`;
}

export function inspectCommand(argv: readonly string[], out: (s: string) => void, _err: (s: string) => void): number {
  const { values, positionals } = parseCommandArgs('inspect', argv, {
    json: { type: 'boolean' },
    'sample-rate': { type: 'string' },
    segment: { type: 'string' },
  });
  if (values.help) {
    out(INSPECT_HELP);
    return 0;
  }
  if (positionals.length !== 1) throw new UsageError("intradyne inspect: expected one CAPTURE (see 'intradyne inspect --help')");
  const segment = positiveInteger('inspect', 'segment', values.segment as string | undefined);
  if (segment !== undefined && (segment < 8 || segment > LIMITS.maxSegmentLength))
    throw new UsageError(`intradyne inspect: --segment expected 8 to ${LIMITS.maxSegmentLength}, received ${segment}`);
  const sampleRate = positiveNumber('inspect', 'sample-rate', values['sample-rate'] as string | undefined);
  if (sampleRate !== undefined && sampleRate > LIMITS.maxSampleRate)
    throw new UsageError(
      `intradyne inspect: --sample-rate expected at most ${LIMITS.maxSampleRate}, received '${values['sample-rate']}'`,
    );
  const report = inspectCapture(positionals[0], {
    sampleRate,
    segmentLength: segment,
  });
  out(values.json ? `${JSON.stringify(report)}\n` : text(report));
  return 0;
}
