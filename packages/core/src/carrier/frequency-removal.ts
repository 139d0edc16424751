import type { ComplexArray } from '../signal/complex.js';

/**
 * Removes a frequency offset from symbols, in place:
 *
 *   rₙ ← rₙ · exp(−j(φ₀ + 2πΔf·(n₀ + n)/Rs)),  n = 0 … N − 1
 *
 * with the phase φ₀ of the first symbol given, so that consecutive spans of a
 * stream join without a phase step. The angle of every symbol is computed
 * from its index (no phasor recursion), so the result does not depend on how
 * a stream is cut.
 *
 * @param symbols N complex symbols, changed in place
 * @param freqOffsetHz Δf, Hz (the symbols rotate as exp(+j2πΔf·t))
 * @param symbolRate Rs, Bd
 * @param startPhase φ₀, rad
 * @param startIndex n₀, the index of the first symbol from the anchor of φ₀ (default 0)
 * @returns the phase of the symbol after the last, φ₀ + 2πΔf·(n₀ + N)/Rs, wrapped into [0, 2π)
 * @example let phase = 0; phase = removeFrequencyOffset(block.x, 1.2e9, 32e9, phase);
 */
export function removeFrequencyOffset(
  symbols: ComplexArray,
  freqOffsetHz: number,
  symbolRate: number,
  startPhase: number,
  startIndex = 0,
): number {
  const n = symbols.length >> 1;
  const w = (2 * Math.PI * freqOffsetHz) / symbolRate;
  for (let k = 0; k < n; k++) {
    const a = startPhase + w * (startIndex + k);
    const c = Math.cos(a);
    const s = -Math.sin(a);
    const re = symbols[2 * k];
    const im = symbols[2 * k + 1];
    symbols[2 * k] = re * c - im * s;
    symbols[2 * k + 1] = re * s + im * c;
  }
  const end = startPhase + w * (startIndex + n);
  return end - 2 * Math.PI * Math.floor(end / (2 * Math.PI));
}
