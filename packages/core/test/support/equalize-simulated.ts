import {
  butterflyEqualizer,
  concatBlocks,
  type EqualizerDiagnostics,
  type EqualizerOptions,
  type FieldBlock,
  idealMatchedFilter,
  type SimulatedCapture,
  type SimulationOptions,
  simulate,
} from '../../src/index.js';
import { type Alignment, alignOutputs } from './align-outputs.js';

export interface EqualizedRun {
  readonly cap: SimulatedCapture;
  readonly out: FieldBlock<'symbols'>;
  readonly diag: EqualizerDiagnostics;
  readonly align: Alignment;
  /** SNR over both outputs (noise powers pooled), dB. */
  readonly pooledSnrDb: number;
}

/** Symbols left out at each end of the measurement: the equalizer sees zeros beyond the capture. */
export const EDGE = 32;

/**
 * Simulates a capture, takes the ideal matched filter at 2 samples per
 * symbol (the SOP, DGD and dispersion still to undo), equalizes it in one
 * block and aligns the outputs with the transmitted symbols.
 */
export function equalizeSimulated(
  sim: SimulationOptions,
  options: Omit<EqualizerOptions, 'modulation'> = {},
  transform?: (out: FieldBlock<'symbols'>, cap: SimulatedCapture) => void,
): EqualizedRun {
  const cap = simulate({ samplesPerSymbol: 2, ...sim });
  const N = sim.symbols;
  const Rs = sim.symbolRate;
  const x = idealMatchedFilter(cap.truth.field.x, N, Rs, cap.rollOff, 2);
  const y = idealMatchedFilter(cap.truth.field.y, N, Rs, cap.rollOff, 2);
  const eq = butterflyEqualizer({ modulation: sim.modulation, ...options });
  const head = eq.process({ domain: 'twoSps', x, y, sampleRate: 2 * Rs, samplesPerSymbol: 2 });
  const tail = eq.flush();
  const out = tail ? concatBlocks([head, tail]) : head;
  transform?.(out, cap);
  const align = alignOutputs(out, cap.reference, 8, EDGE);
  const noise = (10 ** (-align.x.snrDb / 10) + 10 ** (-align.y.snrDb / 10)) / 2;
  return { cap, out, diag: eq.diagnostics(), align, pooledSnrDb: -10 * Math.log10(noise) };
}
