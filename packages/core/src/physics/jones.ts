import type { Rng } from '../random/rng.js';

/**
 * A 2×2 complex (Jones) matrix, row-major, interleaved:
 * [m00re, m00im, m01re, m01im, m10re, m10im, m11re, m11im].
 * Applied to a field (x, y)ᵀ: x' = m00·x + m01·y, y' = m10·x + m11·y.
 */
export type JonesMatrix = Float64Array;

/**
 * The identity Jones matrix.
 * @example multiplyJones(identityJones(), m) // m
 */
export function identityJones(): JonesMatrix {
  return Float64Array.of(1, 0, 0, 0, 0, 0, 1, 0);
}

/**
 * A random unitary 2×2 matrix drawn from the Haar measure on U(2): a uniform
 * global phase times [[a, b], [−b*, a*]] with (a, b) uniform on the unit
 * 3-sphere (|a|² is then uniform on [0, 1]).
 * @example const sop = randomUnitary(new Rng(7)); unitarityError(sop) < 1e-12;
 */
export function randomUnitary(rng: Rng): JonesMatrix {
  const c = Math.sqrt(rng.uniform());
  const s = Math.sqrt(1 - c * c);
  const pa = 2 * Math.PI * rng.uniform();
  const pb = 2 * Math.PI * rng.uniform();
  const g = 2 * Math.PI * rng.uniform();
  const ar = c * Math.cos(pa);
  const ai = c * Math.sin(pa);
  const br = s * Math.cos(pb);
  const bi = s * Math.sin(pb);
  const m = Float64Array.of(ar, ai, br, bi, -br, bi, ar, -ai);
  const gr = Math.cos(g);
  const gi = Math.sin(g);
  for (let k = 0; k < 4; k++) {
    const re = m[2 * k];
    const im = m[2 * k + 1];
    m[2 * k] = re * gr - im * gi;
    m[2 * k + 1] = re * gi + im * gr;
  }
  return m;
}

/**
 * Matrix product a·b.
 * @example const m = multiplyJones(sop, psp); // sop · psp
 */
export function multiplyJones(a: JonesMatrix, b: JonesMatrix): JonesMatrix {
  const out = new Float64Array(8);
  for (let r = 0; r < 2; r++) {
    for (let c = 0; c < 2; c++) {
      let re = 0;
      let im = 0;
      for (let k = 0; k < 2; k++) {
        const xr = a[4 * r + 2 * k];
        const xi = a[4 * r + 2 * k + 1];
        const yr = b[4 * k + 2 * c];
        const yi = b[4 * k + 2 * c + 1];
        re += xr * yr - xi * yi;
        im += xr * yi + xi * yr;
      }
      out[4 * r + 2 * c] = re;
      out[4 * r + 2 * c + 1] = im;
    }
  }
  return out;
}

/**
 * Largest |(M·Mᴴ − I)ᵢⱼ|: zero for a unitary matrix.
 * @example unitarityError(identityJones()) // 0
 */
export function unitarityError(m: JonesMatrix): number {
  const h = Float64Array.of(m[0], -m[1], m[4], -m[5], m[2], -m[3], m[6], -m[7]);
  const p = multiplyJones(m, h);
  return Math.max(Math.hypot(p[0] - 1, p[1]), Math.hypot(p[2], p[3]), Math.hypot(p[4], p[5]), Math.hypot(p[6] - 1, p[7]));
}
