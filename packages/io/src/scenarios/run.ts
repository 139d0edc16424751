import { join } from 'node:path';
import {
  LIBRARY_VERSION,
  type ModulationName,
  OptionError,
  type SimulatedCapture,
  type SimulationOptions,
  simulate,
} from '@intradyne/core';
import { LIMITS } from '../capture/limits.js';
import { commitTogether, prepareOutputFolder } from '../write/atomic.js';
import { stageCaptureCsv, stageJson, stageReferenceCsv } from '../write/csv.js';
import { mergeOptions, type Scenario } from './scenario.js';

/** What `runScenario` wrote for one capture. */
export interface WrittenCapture {
  /** The capture's name. */
  readonly name: string;
  /** Path of the data file written. */
  readonly data: string;
  /** Path of the descriptor written. */
  readonly descriptor: string;
  /** Path of the reference written. */
  readonly reference: string;
  /** The simulated capture, with its truth. */
  readonly capture: SimulatedCapture;
  /** The simulator options it was made with. */
  readonly options: SimulationOptions;
}

/** Options of {@link runScenario}. */
export interface RunScenarioOptions {
  /** Replace files that exist (default false). */
  readonly overwrite?: boolean;
  /** Override every capture's symbol count. */
  readonly symbols?: number;
  /** Called after each capture is written, for progress. */
  readonly onCapture?: (written: WrittenCapture, index: number, total: number) => void;
}

/**
 * Checks the sizes a simulation would allocate against `LIMITS` before it
 * allocates them: samples per channel (symbols × samples per symbol), the
 * samples per symbol and the sample rate. The simulator checks the rest
 * (and applies the dispersion in the frequency domain, without a filter).
 * @throws OptionError naming the capture's option and the bound
 */
function checkSimulationSize(name: string, opts: SimulationOptions): void {
  const sps = typeof opts.samplesPerSymbol === 'number' ? opts.samplesPerSymbol : 2;
  const where = `simulate '${name}'`;
  if (typeof opts.symbols === 'number' && opts.symbols * sps > LIMITS.maxSimulatedSamples)
    throw new OptionError(
      where,
      'symbols',
      `at most ${Math.floor(LIMITS.maxSimulatedSamples / sps)} symbols at ${sps} samples per symbol (${LIMITS.maxSimulatedSamples} samples per channel)`,
      opts.symbols,
    );
  if (sps > LIMITS.maxSamplesPerSymbol)
    throw new OptionError(where, 'samplesPerSymbol', `at most ${LIMITS.maxSamplesPerSymbol}`, sps);
  if (typeof opts.symbolRate === 'number' && opts.symbolRate * sps > LIMITS.maxSampleRate)
    throw new OptionError(
      where,
      'symbolRate',
      `a sample rate (symbol rate × samples per symbol) of at most ${LIMITS.maxSampleRate} Sa/s`,
      opts.symbolRate,
    );
}

/**
 * Simulates every capture of a scenario into `outDir`: per capture a CSV
 * (`<name>.csv`), its descriptor (`<name>.json`) and the transmitted symbols
 * (`<name>-reference.csv`, which has no descriptor of its own). The three
 * files of a capture are written all or none. Sizes are checked against
 * `LIMITS` before anything is allocated.
 * @throws OptionError for a capture's options (the simulator's checks, or
 *   more samples than `LIMITS.maxSimulatedSamples`); OutputError or
 *   OutputExistsError when a file cannot be written
 * @example runScenario(builtInScenario('qpsk-b2b')!, 'captures', { symbols: 16384 });
 */
export function runScenario(scenario: Scenario, outDir: string, options: RunScenarioOptions = {}): WrittenCapture[] {
  const plans = scenario.captures.map((entry) => {
    const { name, timeColumn, ...over } = entry;
    let opts = mergeOptions(scenario.base, over) as SimulationOptions;
    if (options.symbols !== undefined) opts = { ...opts, symbols: options.symbols };
    checkSimulationSize(name, opts);
    return { name, timeColumn, opts };
  });
  prepareOutputFolder(outDir);
  const written: WrittenCapture[] = [];
  plans.forEach(({ name, timeColumn, opts }, index) => {
    const capture = simulate(opts);
    const data = join(outDir, `${name}.csv`);
    const descriptor = join(outDir, `${name}.json`);
    const referenceName = `${name}-reference.csv`;
    const reference = join(outDir, referenceName);
    const comments = [
      `intradyne ${LIBRARY_VERSION} simulated capture '${name}' of scenario '${scenario.name}'`,
      `sample rate ${capture.channels.sampleRate} Sa/s, symbol rate ${capture.symbolRate} Bd, ${capture.modulation}`,
    ];
    const dispersion = opts.channel?.dispersionPsPerNm ?? 0;
    const stageDescriptor = () =>
      stageJson(
        descriptor,
        {
          sampleRate: capture.channels.sampleRate,
          symbolRate: capture.symbolRate,
          // A shaped format as its family and a shaping field (the form docs/capture-formats.md shows).
          ...descriptorModulation(capture.modulation),
          reference: referenceName,
          rollOff: capture.rollOff,
          ...(scenario.statesDispersion === false ? {} : { dispersionPsPerNm: dispersion }),
          // The front end's skews, as its calibration would give them.
          ...(opts.receiver?.skewPs && scenario.statesSkew !== false ? { skewPs: opts.receiver.skewPs } : {}),
          simulation: {
            scenario: scenario.name,
            options: opts,
            truth: {
              esN0Db: capture.truth.esN0Db,
              clockOffsetPpm: capture.truth.clockOffsetPpm,
              clipped: capture.truth.clipped,
            },
          },
        },
        { overwrite: options.overwrite },
      );
    commitTogether([
      () => stageCaptureCsv(data, capture.channels, { comments, timeColumn, overwrite: options.overwrite }),
      () =>
        stageReferenceCsv(reference, capture.reference, {
          overwrite: options.overwrite,
          comments: [`transmitted symbols of '${name}'`],
        }),
      stageDescriptor,
    ]);
    const w = { name, data, descriptor, reference, capture, options: opts };
    written.push(w);
    options.onCapture?.(w, index, plans.length);
  });
  return written;
}

/** The descriptor's `modulation` (and `shaping`) fields of a modulation name. */
function descriptorModulation(name: ModulationName): { modulation: string; shaping?: { entropy: number } | { nu: number } } {
  const i = name.indexOf(':');
  if (i < 0) return { modulation: name };
  const [key, value] = name.slice(i + 1).split('=');
  return { modulation: name.slice(0, i), shaping: key === 'entropy' ? { entropy: Number(value) } : { nu: Number(value) } };
}
