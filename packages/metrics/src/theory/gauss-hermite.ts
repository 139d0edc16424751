/**
 * Gauss–Hermite quadrature: ∫ e^(−t²)·f(t) dt ≈ Σₖ wₖ·f(tₖ), exact for
 * polynomials f of degree up to 2n − 1.
 *
 * Nodes are the roots of the Hermite polynomial Hₙ, found by Newton's method
 * on the orthonormal recurrence
 *   p₀ = π^(−1/4), p₁ = √2·t·p₀, pⱼ = t·√(2/j)·pⱼ₋₁ − √((j − 1)/j)·pⱼ₋₂,
 * with p′ₙ = √(2n)·pₙ₋₁ and weights wₖ = 2 / p′ₙ(tₖ)², from initial guesses
 * that follow the asymptotics of the largest roots (Press, Teukolsky,
 * Vetterling, Flannery, "Numerical Recipes", 3rd ed., §4.6). The
 * orthonormal form keeps every term finite; the initial guesses stop
 * converging to distinct roots near 200 nodes, so n is capped at 150.
 */
export interface GaussHermiteRule {
  /** Nodes tₖ, ascending, n values. */
  readonly nodes: Float64Array;
  /** Weights wₖ for the weight function e^(−t²), n values; they sum to √π. */
  readonly weights: Float64Array;
}

const rules = new Map<number, GaussHermiteRule>();

/**
 * The n-point Gauss–Hermite rule (cached per n).
 * @param n number of nodes, an integer in [1, 150]
 * @throws RangeError for any other n
 * @example const { nodes, weights } = gaussHermite(2); // nodes ±1/√2, weights √π/2
 */
export function gaussHermite(n: number): GaussHermiteRule {
  if (!Number.isInteger(n) || n < 1 || n > 150) {
    throw new RangeError(`gaussHermite: expected an integer node count in [1, 150], received ${n}`);
  }
  const hit = rules.get(n);
  if (hit) return hit;
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  const pim4 = Math.PI ** -0.25;
  const half = Math.floor((n + 1) / 2);
  let z = 0;
  for (let i = 0; i < half; i++) {
    // Initial guesses: the largest root, then each from the previous ones (Numerical Recipes §4.6).
    if (i === 0) z = Math.sqrt(2 * n + 1) - 1.85575 * (2 * n + 1) ** -0.16667;
    else if (i === 1) z -= (1.14 * n ** 0.426) / z;
    else if (i === 2) z = 1.86 * z - 0.86 * nodes[n - 1];
    else if (i === 3) z = 1.91 * z - 0.91 * nodes[n - 2];
    else z = 2 * z - nodes[n - i + 1];
    let dp = 0;
    for (let iter = 0; iter < 100; iter++) {
      let p1 = pim4;
      let p2 = 0;
      for (let j = 1; j <= n; j++) {
        const p3 = p2;
        p2 = p1;
        p1 = z * Math.sqrt(2 / j) * p2 - Math.sqrt((j - 1) / j) * p3;
      }
      dp = Math.sqrt(2 * n) * p2;
      const step = p1 / dp;
      z -= step;
      if (Math.abs(step) <= 1e-15 * Math.max(1, Math.abs(z))) break;
    }
    // Roots come in ± pairs; the middle root of an odd n is 0.
    nodes[n - 1 - i] = z;
    nodes[i] = -z;
    weights[n - 1 - i] = 2 / (dp * dp);
    weights[i] = weights[n - 1 - i];
  }
  if (n % 2 === 1) nodes[half - 1] = 0;
  const rule = { nodes, weights };
  rules.set(n, rule);
  return rule;
}
