/**
 * An update rule of the butterfly equalizer: it turns one output sample into
 * the error e of the stochastic-gradient update h ← h + μ·e·u*. The
 * equalizer owns the taps and runs the tap loop; a rule is called once per
 * output sample and polarization, never per tap.
 *
 * Rules: {@link cmaRule} (Godard 1980), {@link rdeRule} (Fatadin, Ives &
 * Savory 2009), {@link ddLmsRule} (decision-directed LMS with its own
 * carrier-phase loop).
 */
export interface UpdateRule {
  /** 'cma', 'rde' or 'dd-lms'. */
  readonly name: string;
  /** Step size μ of the tap update. */
  readonly stepSize: number;
  /**
   * Error for the output sample z = re + j·im of polarization `pol`
   * (0 = x, 1 = y): writes e into out[0] (re) and out[1] (im) and returns
   * the rule's cost for that sample (|e|²-like, for the error trace).
   * Called once per symbol and polarization; must not allocate.
   */
  error(re: number, im: number, pol: 0 | 1, out: Float64Array): number;
  /** Forgets any state (a rule with none does nothing). */
  reset(): void;
}
