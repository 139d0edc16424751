import { type Constellation, constellation, type ModulationName } from '../modulation/constellation.js';
import type { RadialTargets, UpdateRule } from './update-rule.js';

/**
 * Radius-directed equalization (Fatadin, Ives & Savory, "Blind equalization
 * and carrier phase recovery in a 16-QAM optical coherent system", JLT
 * 27(15), 2009): CMA with the target radius taken as the constellation ring
 * nearest to the output,
 *
 *   e = z·(Rᵢ² − |z|²),   i = argminᵢ | |z| − Rᵢ |
 *
 * Rings come from the constellation (16QAM at unit power: R² ∈ {0.2, 1, 1.8}).
 * For QPSK (one ring) it is CMA.
 * @param stepSize μ > 0
 * @example const rule = rdeRule('16qam', 3e-4);
 */
export function rdeRule(modulation: ModulationName | Constellation, stepSize: number): UpdateRule {
  const c = typeof modulation === 'string' ? constellation(modulation) : modulation;
  return new Rde(c.ringRadii2, stepSize);
}

class Rde implements UpdateRule {
  readonly name = 'rde';
  private readonly rings: Float64Array;
  /** Squared midpoints between neighbouring radii: |z|² above bound[i] is nearer ring i + 1. */
  private readonly bounds: Float64Array;
  readonly radial: RadialTargets;

  constructor(
    rings2: readonly number[],
    readonly stepSize: number,
  ) {
    this.rings = Float64Array.from(rings2);
    this.bounds = new Float64Array(Math.max(0, rings2.length - 1));
    for (let i = 0; i + 1 < rings2.length; i++) {
      const mid = 0.5 * (Math.sqrt(rings2[i]) + Math.sqrt(rings2[i + 1]));
      this.bounds[i] = mid * mid;
    }
    this.radial = { rings2: this.rings, bounds2: this.bounds };
  }

  error(re: number, im: number, _pol: 0 | 1, out: Float64Array): number {
    const p = re * re + im * im;
    // At most 9 rings (64QAM): a linear scan beats a binary search here.
    const b = this.bounds;
    let i = 0;
    while (i < b.length && p > b[i]) i++;
    const d = this.rings[i] - p;
    out[0] = d * re;
    out[1] = d * im;
    return d * d;
  }

  reset(): void {}
}
