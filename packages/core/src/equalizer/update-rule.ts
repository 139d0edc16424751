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
  /**
   * For a rule of the radius-directed form e = z·(Rᵢ² − |z|²), the ring i
   * chosen from |z|² alone (CMA: one ring; RDE: the nearest ring): its rings
   * and the bounds between them. The equalizer then evaluates the rule inside
   * its fused per-symbol kernel instead of calling `error` (a call through an
   * interface per symbol and polarization costs more than the rule itself);
   * it must give the same e as `error`. Absent for other rules.
   */
  readonly radial?: RadialTargets;
  /** Forgets any state (a rule with none does nothing). */
  reset(): void;
  /**
   * For a rule that tracks the carrier itself (the decision-directed ones):
   * takes a blind output seen just before the equalizer switches to it, to
   * acquire its phase. Not called for other rules' slots.
   */
  observe?(re: number, im: number, pol: 0 | 1): void;
  /** Called once as the equalizer switches to this rule, after the observed outputs. */
  acquire?(): void;
  /** Moves any carrier state back `symbols` symbols, as the equalizer starts over from the capture's start. */
  rewind?(symbols: number): void;
  /** The state of its carrier loop, for the diagnostics (a rule without one has no such method). */
  loopState?(pol: 0 | 1): CarrierLoopState;
}

/** The state of a rule's carrier loop, per polarization. */
export interface CarrierLoopState {
  /** Loop phase θ, rad. */
  readonly phase: number;
  /** Loop frequency ν, rad per symbol. */
  readonly frequency: number;
}

/**
 * Rings of a radius-directed rule: e = z·(rings2[i] − |z|²) with i the
 * number of `bounds2` entries that |z|² exceeds (bounds2 ascending, one
 * fewer than rings2).
 */
export interface RadialTargets {
  /** Squared target radii Rᵢ², ascending. */
  readonly rings2: Float64Array;
  /** Squared boundaries between neighbouring rings: |z|² above bounds2[i] selects ring i + 1 or beyond. */
  readonly bounds2: Float64Array;
}
