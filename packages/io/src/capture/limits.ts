import { cdTapCount } from '@intradyne/core';

/**
 * Upper bounds on what a capture, a command-line option or a scenario may
 * ask for, checked before anything is allocated: beyond them the receiver
 * would build kernels or buffers of gigabytes (or fail to allocate them)
 * for a value that is almost certainly a typing mistake (64e15 for 64e9).
 * Each bound sits well above what a lab records today; the reasons are
 * beside each value and in docs/capture-formats.md.
 */
export const LIMITS = {
  /**
   * Scope sample rate, Sa/s: 10 TSa/s, about forty times the fastest
   * real-time oscilloscopes sold today.
   */
  maxSampleRate: 1e13,
  /**
   * Samples per symbol (sample rate over symbol rate): 256. The resampler's
   * interpolation kernel grows with this ratio (about 150 MB at 256, 310 MB
   * at 1024, measured); a 256 GSa/s scope on a 1 GBd signal is 256.
   */
  maxSamplesPerSymbol: 256,
  /**
   * Taps of the dispersion-compensation filter at two samples per symbol:
   * 2^18. That compensates 170,000 ps/nm (10,000 km of standard fibre) up
   * to about 220 GBd; a whole analysis with a 330,000-tap filter peaks near
   * 290 MB (measured), so the bound keeps it under that.
   */
  maxDispersionTaps: 1 << 18,
  /**
   * Reference symbols: 2^24 (16.8 million). An analysis holds a reference as
   * its labels (2 bytes per symbol: 32 MB at the bound); an Arrow reference,
   * and loadReferenceCsv's symbols, are read whole first (two polarizations
   * of complex float64: 512 MB at the bound); transmitted
   * patterns are PRBS periods or random blocks of 2^15 to 2^20 symbols.
   */
  maxReferenceSymbols: 1 << 24,
  /**
   * Samples per channel that `simulate` may write: 2^22 (4.2 million, e.g.
   * 1.6 million symbols at 2.5 samples per symbol). The simulator holds the
   * whole capture and its intermediate signals: 1 million symbols at 2.5
   * samples per symbol peak at about 1 GB (measured).
   */
  maxSimulatedSamples: 1 << 22,
  /** Welch segment length of `inspect`: 2^20 samples. */
  maxSegmentLength: 1 << 20,
  /** Worker threads of a sweep: 1024. */
  maxJobs: 1024,
  /** Array tasks of an emitted Slurm script: 100,000. */
  maxTasks: 100_000,
} as const;

/**
 * What is wrong with a pair of rates, in words, or null when they are
 * within {@link LIMITS}: the sample rate at most `maxSampleRate`, at least
 * the symbol rate, and at most `maxSamplesPerSymbol` times it.
 * @example rateProblem(64e15, 32e9) // 'at most 10000000000000 Sa/s'
 */
export function rateProblem(sampleRate: number, symbolRate: number): string | null {
  if (sampleRate > LIMITS.maxSampleRate) return `at most ${LIMITS.maxSampleRate} Sa/s`;
  if (sampleRate < symbolRate) return `at least the symbol rate (${symbolRate} Bd) in Sa/s`;
  if (sampleRate > LIMITS.maxSamplesPerSymbol * symbolRate)
    return `at most ${LIMITS.maxSamplesPerSymbol} samples per symbol (${LIMITS.maxSamplesPerSymbol * symbolRate} Sa/s at ${symbolRate} Bd)`;
  return null;
}

/**
 * The largest |dispersion| in ps/nm whose compensation filter at two
 * samples per symbol of `symbolRate` has at most `maxDispersionTaps` taps.
 * @example maxDispersionPsPerNm(32e9) // about 8.0e6 ps/nm
 */
export function maxDispersionPsPerNm(symbolRate: number): number {
  // The tap count is 2·⌊k·|D|/2⌋ + 1 with k linear in |D|: k from a very large |D|, where the floor is negligible.
  const perPsPerNm = (cdTapCount(1e12, 2 * symbolRate) - 1) / 1e12;
  return perPsPerNm > 0 ? Math.floor((LIMITS.maxDispersionTaps - 1) / perPsPerNm) : Number.POSITIVE_INFINITY;
}
