import { existsSync } from 'node:fs';
import { extname } from 'node:path';
import {
  CHANNEL_NAMES,
  type ChannelBlock,
  type ChannelName,
  fromParts,
  type SpectrumSummary,
  summarizeSpectrum,
  WelchEstimator,
} from '@intradyne/core';
import { readArrowCapture } from '../arrow/arrow-capture.js';
import { descriptorPathFor, openCapture, resolveDataPath } from '../capture/capture.js';
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
printed beside it.

The descriptor, when present, gives the sample rate and is validated with its
reference; without one, the sample rate comes from a time column or from
--sample-rate.

Options:
  --sample-rate SA/S   sample rate, overriding the descriptor
  --segment N          Welch segment length (default 1024, fewer for short captures)
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
  /** Summary of the Welch power spectrum of x = xi + j·xq. */
  readonly spectrum: SpectrumSummary & {
    /** Samples per Welch segment. */
    readonly segmentLength: number;
    /** Segments averaged. */
    readonly segments: number;
    /** Frequency resolution, Hz. */
    readonly resolutionHz: number;
  };
  /** The symbol rate seen in the spectrum, against the descriptor's. */
  readonly symbolRate: {
    /** Estimated symbol rate, Bd. */
    readonly estimateBd: number;
    /** How it was estimated, in words. */
    readonly method: string;
    /** The descriptor's symbol rate, Bd, or null without a descriptor. */
    readonly statedBd: number | null;
    /** (estimate − stated) / stated, or null without a descriptor. */
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
  let welch: [WelchEstimator, WelchEstimator] | null = null;
  let sampleRate = Number.NaN;
  // Hold the first samples until the segment length is settled (short captures get shorter segments).
  const head: ChannelBlock[] = [];
  let headSamples = 0;
  const want = options.segmentLength ?? 1024;
  const feed = (b: ChannelBlock) => {
    if (!welch) return;
    welch[0].push(fromParts(b.xi, b.xq));
    welch[1].push(fromParts(b.yi, b.yq));
  };
  for (const b of blocks) {
    sampleRate = b.sampleRate;
    for (const c of CHANNEL_NAMES) accumulate(stats[c], b[c]);
    if (welch) feed(b);
    else {
      head.push(b);
      headSamples += b.xi.length;
      if (headSamples >= 8 * want) {
        welch = [
          new WelchEstimator(sampleRate, { segmentLength: want }),
          new WelchEstimator(sampleRate, { segmentLength: want }),
        ];
        for (const h of head.splice(0)) feed(h);
      }
    }
  }
  const samples = stats.xi.count;
  if (!welch) {
    // Fewer than 8 segments: shorten the segment to a power of two giving about 8.
    let n = 8;
    while (n * 2 * 8 <= samples && n * 2 <= want) n *= 2;
    if (samples < 64) {
      throw new InputError({ file: dataPath }, 'data', 'at least 64 samples for a spectrum', `${samples}`);
    }
    welch = [new WelchEstimator(sampleRate, { segmentLength: n }), new WelchEstimator(sampleRate, { segmentLength: n })];
    for (const h of head.splice(0)) feed(h);
  }
  const px = welch[0].result();
  const py = welch[1].result();
  const psd = px.psd.map((v, i) => (v + py.psd[i]) / 2);
  const spectrum = summarizeSpectrum({ ...px, psd, segments: px.segments + py.segments });
  const estimate = spectrum.symbolRateBd;
  return {
    capture: dataPath,
    format,
    descriptor: existsSync(sidecar) ? sidecar : null,
    samples,
    sampleRate,
    durationS: samples / sampleRate,
    channels: Object.fromEntries(CHANNEL_NAMES.map((c) => [c, summarize(stats[c])])) as Record<ChannelName, ChannelSummary>,
    spectrum: { ...spectrum, segmentLength: px.psd.length, segments: px.segments + py.segments, resolutionHz: px.resolutionHz },
    symbolRate: {
      estimateBd: estimate,
      method: 'power above the noise floor / in-band plateau level (raised-cosine area), Welch PSD of x and y',
      statedBd: stated,
      relativeDifference: stated === null ? null : estimate / stated - 1,
    },
  };
}

const ghz = (v: number) => `${(v / 1e9).toFixed(3)} GHz`;
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
    `  -3 dB band   ${ghz(r.spectrum.halfPowerLowHz)} to ${ghz(r.spectrum.halfPowerHighHz)} (width ${ghz(r.spectrum.bandwidth3dBHz)}, centre ${ghz(r.spectrum.centreHz)})`,
    `  99 % band    ${ghz(r.spectrum.occupiedLowHz)} to ${ghz(r.spectrum.occupiedHighHz)} (width ${ghz(r.spectrum.occupiedBandwidthHz)}, power above the floor)`,
    `  plateau/floor ${Number.isFinite(r.spectrum.plateauToFloorDb) ? `${r.spectrum.plateauToFloorDb.toFixed(1)} dB` : 'no out-of-band floor'}`,
    `symbol rate  ${(r.symbolRate.estimateBd / 1e9).toFixed(3)} GBd estimated${
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
  if (segment !== undefined && segment < 8)
    throw new UsageError(`intradyne inspect: --segment expected at least 8, received ${segment}`);
  const report = inspectCapture(positionals[0], {
    sampleRate: positiveNumber('inspect', 'sample-rate', values['sample-rate'] as string | undefined),
    segmentLength: segment,
  });
  out(values.json ? `${JSON.stringify(report)}\n` : text(report));
  return 0;
}
