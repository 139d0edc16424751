import type { SimulationOptions } from '@intradyne/core';

/**
 * A scenario: a family of simulated captures sharing a base configuration.
 * Each capture overrides some fields of `base` (objects merge, values
 * replace) and must end up with a seed.
 *
 * File form (JSON): { "name", "description", "base": {…}, "captures": [{ "name", …overrides }] };
 * a capture's `timeColumn: true` writes a time column `t` (seconds) first.
 * plus `statesDispersion` (default true): whether the descriptor states the
 * accumulated dispersion, or leaves the receiver to estimate it, and
 * `statesSkew` (default true): whether it states the receiver's skews.
 */
export interface Scenario {
  /** Scenario name. */
  readonly name: string;
  /** What it shows, in a sentence. */
  readonly description: string;
  /** Simulator options shared by every capture. */
  readonly base: Partial<SimulationOptions>;
  /** The captures: a name and the options that differ from `base`. */
  readonly captures: readonly ({
    /** File name of the capture, without extension. */
    readonly name: string;
    /** Write a `t` column (seconds) to the CSV (default false). */
    readonly timeColumn?: boolean;
  } & Partial<SimulationOptions>)[];
  /** Whether the descriptor states the accumulated dispersion (default true). */
  readonly statesDispersion?: boolean;
  /** Whether the descriptor states the receiver's skews, as a calibrated front end knows them (default true). */
  readonly statesSkew?: boolean;
}

/**
 * Deep merge of plain objects: `over` wins; arrays and values replace.
 * @example mergeOptions({ channel: { esN0Db: 10, linewidthHz: 1e5 } }, { channel: { esN0Db: 12 } }) // { channel: { esN0Db: 12, linewidthHz: 1e5 } }
 */
export function mergeOptions<T extends object>(base: T, over: Partial<T>): T {
  const out: Record<string, unknown> = { ...(base as Record<string, unknown>) };
  for (const [k, v] of Object.entries(over as Record<string, unknown>)) {
    const b = out[k];
    out[k] = isPlainObject(b) && isPlainObject(v) ? mergeOptions(b, v) : v;
  }
  return out as T;
}

function isPlainObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

const gbd32 = { symbolRate: 32e9 } as const;

/** Built-in scenarios, set in lab situations of our own. */
export const BUILT_IN_SCENARIOS: readonly Scenario[] = [
  {
    name: 'demo',
    description:
      'Bench test of a DP-16QAM transceiver at 32 GBd over an 80 km span: OSNR stepped from 18 to 26 dB, ' +
      '80 GSa/s scope, random polarization, 1.2 GHz laser offset, 100 kHz lasers, a slightly skewed receiver.',
    base: {
      modulation: '16qam',
      symbols: 16384,
      ...gbd32,
      samplesPerSymbol: 2.5,
      rollOff: 0.1,
      channel: { sop: 'random', dgdPs: 5, linewidthHz: 100e3, freqOffsetHz: 1.2e9, dispersionPsPerNm: 1360 },
      receiver: { iqPhaseDeg: { x: 2, y: -1.5 }, skewPs: { xq: 1.5, yq: -1 }, adc: { bits: 8, loading: 0.25 } },
    },
    captures: [18, 20, 22, 24, 26].map((osnrDb, i) => ({ name: `osnr-${osnrDb}db`, seed: 101 + i, channel: { osnrDb } })),
  },
  {
    name: 'qpsk-b2b',
    description: 'DP-QPSK at 32 GBd back to back with a noise-loaded receiver: Es/N0 from 8 to 14 dB, 64 GSa/s.',
    base: { modulation: 'qpsk', symbols: 32768, ...gbd32, samplesPerSymbol: 2, channel: { sop: 'random' } },
    captures: [8, 10, 12, 14].map((esN0Db, i) => ({ name: `esn0-${esN0Db}db`, seed: 201 + i, channel: { esN0Db } })),
  },
  {
    name: 'metro-16qam',
    description:
      'DP-16QAM at 32 GBd over 80 km of standard fibre (1,360 ps/nm), 80 GSa/s scope, 8-bit ADC, IQ phase error and skew; ' +
      'the descriptors leave the dispersion to be estimated.',
    base: {
      modulation: '16qam',
      symbols: 32768,
      ...gbd32,
      samplesPerSymbol: 2.5,
      channel: { esN0Db: 18, sop: 'random', dgdPs: 10, linewidthHz: 200e3, freqOffsetHz: -2e9, dispersionPsPerNm: 1360 },
      receiver: { iqPhaseDeg: { x: 5, y: 5 }, skewPs: { xq: 3, yq: 3 }, adc: { bits: 8 } },
    },
    captures: [
      { name: 'span-80km-a', seed: 301 },
      { name: 'span-80km-b', seed: 302 },
    ],
    statesDispersion: false,
  },
  {
    name: 'dense-64qam',
    description: 'DP-64QAM at 32 GBd with narrow-linewidth lasers (50 kHz): Es/N0 22 and 25 dB, 64 GSa/s.',
    base: {
      modulation: '64qam',
      symbols: 65536,
      ...gbd32,
      samplesPerSymbol: 2,
      channel: { sop: 'random', linewidthHz: 50e3, freqOffsetHz: 0.8e9 },
    },
    captures: [22, 25].map((esN0Db, i) => ({ name: `esn0-${esN0Db}db`, seed: 401 + i, channel: { esN0Db } })),
  },
];

/**
 * The built-in scenario of this name, or undefined.
 * @example builtInScenario('metro-16qam')?.captures.length
 */
export function builtInScenario(name: string): Scenario | undefined {
  return BUILT_IN_SCENARIOS.find((s) => s.name === name);
}
