import { type Constellation, constellation, type ModulationName } from '../modulation/constellation.js';
import type { RadialTargets, UpdateRule } from './update-rule.js';

/**
 * The constant-modulus algorithm (Godard, "Self-recovering equalization and
 * carrier tracking in two-dimensional data communication systems", IEEE
 * Trans. Commun. 28(11), 1980), minimizing E[(|z|² − R2)²]:
 *
 *   e = z·(R2 − |z|²),   R2 = E|a|⁴ / E|a|²
 *
 * with R2 from the constellation (1 for QPSK, 1.32 for 16QAM, 1.381 for
 * 64QAM at unit power), so that the output converges to unit power.
 * @param modulation sets R2
 * @param stepSize μ > 0
 * @example const rule = cmaRule('qpsk', 1e-3);
 */
export function cmaRule(modulation: ModulationName | Constellation, stepSize: number): UpdateRule {
  const c = typeof modulation === 'string' ? constellation(modulation) : modulation;
  return new Cma(c.cmaRadius2, stepSize);
}

class Cma implements UpdateRule {
  readonly name = 'cma';
  /** One ring, no bound: e = z·(R2 − |z|²). */
  readonly radial: RadialTargets;
  constructor(
    readonly radius2: number,
    readonly stepSize: number,
  ) {
    this.radial = { rings2: Float64Array.of(radius2), bounds2: new Float64Array(0) };
  }

  error(re: number, im: number, _pol: 0 | 1, out: Float64Array): number {
    const d = this.radius2 - (re * re + im * im);
    out[0] = d * re;
    out[1] = d * im;
    return d * d;
  }

  reset(): void {}
}
