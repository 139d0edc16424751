import betaQuantile from '@stdlib/stats-base-dists-beta-quantile';

/** A closed interval [lower, upper] for a probability. */
export type Interval = readonly [lower: number, upper: number];

/**
 * Exact (Clopper–Pearson) two-sided confidence interval for the probability
 * of a binomial count: k errors in n trials (Clopper & Pearson, "The use of
 * confidence or fiducial limits illustrated in the case of the binomial",
 * Biometrika 26(4), 1934), through the beta quantile B⁻¹:
 *
 *   lower = B⁻¹(α/2; k, n − k + 1)   (0 when k = 0),
 *   upper = B⁻¹(1 − α/2; k + 1, n − k)   (1 when k = n),   α = 1 − confidence.
 *
 * Its coverage is at least `confidence` for every true probability. With
 * zero errors the interval is [0, 1 − (α/2)^(1/n)]: an upper bound.
 * @param errors k, an integer in [0, n]
 * @param trials n, a positive integer
 * @param confidence in (0, 1) (default 0.95)
 * @throws RangeError for counts or a confidence out of range
 * @example clopperPearson(0, 1e6) // [0, 3.69e-6]
 */
export function clopperPearson(errors: number, trials: number, confidence = 0.95): Interval {
  if (!Number.isSafeInteger(trials) || trials < 1) {
    throw new RangeError(`clopperPearson: expected a positive integer trial count, received ${trials}`);
  }
  if (!Number.isSafeInteger(errors) || errors < 0 || errors > trials) {
    throw new RangeError(`clopperPearson: expected an integer error count in [0, ${trials}], received ${errors}`);
  }
  if (!(confidence > 0 && confidence < 1)) {
    throw new RangeError(`clopperPearson: expected a confidence in (0, 1), received ${confidence}`);
  }
  const alpha = 1 - confidence;
  const lower = errors === 0 ? 0 : betaQuantile(alpha / 2, errors, trials - errors + 1);
  const upper = errors === trials ? 1 : betaQuantile(1 - alpha / 2, errors + 1, trials - errors);
  return [lower, upper];
}
