import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { LIBRARY_VERSION, type SimulatedCapture, type SimulationOptions, simulate } from '@intradyne/core';
import { writeCaptureCsv, writeJsonAtomic, writeReferenceCsv } from '../write/csv.js';
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
 * Simulates every capture of a scenario into `outDir`: per capture a CSV
 * (`<name>.csv`), its descriptor (`<name>.json`) and the transmitted symbols
 * (`<name>-reference.csv`, which has no descriptor of its own).
 * @example runScenario(builtInScenario('qpsk-b2b')!, 'captures', { symbols: 16384 });
 */
export function runScenario(scenario: Scenario, outDir: string, options: RunScenarioOptions = {}): WrittenCapture[] {
  mkdirSync(outDir, { recursive: true });
  const written: WrittenCapture[] = [];
  scenario.captures.forEach((entry, index) => {
    const { name, timeColumn, ...over } = entry;
    let opts = mergeOptions(scenario.base, over) as SimulationOptions;
    if (options.symbols !== undefined) opts = { ...opts, symbols: options.symbols };
    const capture = simulate(opts);
    const data = join(outDir, `${name}.csv`);
    const descriptor = join(outDir, `${name}.json`);
    const referenceName = `${name}-reference.csv`;
    const reference = join(outDir, referenceName);
    const comments = [
      `intradyne ${LIBRARY_VERSION} simulated capture '${name}' of scenario '${scenario.name}'`,
      `sample rate ${capture.channels.sampleRate} Sa/s, symbol rate ${capture.symbolRate} Bd, ${capture.modulation}`,
    ];
    writeCaptureCsv(data, capture.channels, { comments, timeColumn, overwrite: options.overwrite });
    writeReferenceCsv(reference, capture.reference, {
      overwrite: options.overwrite,
      comments: [`transmitted symbols of '${name}'`],
    });
    const dispersion = opts.channel?.dispersionPsPerNm ?? 0;
    writeJsonAtomic(
      descriptor,
      {
        sampleRate: capture.channels.sampleRate,
        symbolRate: capture.symbolRate,
        modulation: capture.modulation,
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
    const w = { name, data, descriptor, reference, capture, options: opts };
    written.push(w);
    options.onCapture?.(w, index, scenario.captures.length);
  });
  return written;
}
