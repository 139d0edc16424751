import { PhaseRefinement } from '../carrier/phase-refinement.js';
import {
  type Constellation,
  checkModulation,
  constellation,
  type ModulationName,
  nearestLabel,
  nearestLevel,
} from '../modulation/constellation.js';
import { checkBlock, checkRate } from '../pipeline/block-checks.js';
import { type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import { LeadingSpan } from '../pipeline/leading-span.js';
import { OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { type ComplexArray, complexArray, concatComplex } from '../signal/complex.js';
import { butterflyOutput, FILTER_XX, FILTER_XY, FILTER_YX, FILTER_YY, updateRow } from './butterfly-kernel.js';
import type { ButterflyTaps } from './equalizer.js';

const NAME = 'decision-equalizer';

/** Options of {@link decisionEqualizer}; only `modulation` is required. */
export interface DecisionEqualizerOptions {
  /** Sets the decisions. */
  readonly modulation: ModulationName;
  /** Taps per filter L, odd, 1 … 63 (default 9: four symbols either side). */
  readonly taps?: number;
  /** LMS step size μ (default 3e-4, for symbols at unit average power). */
  readonly stepSize?: number;
  /**
   * Passes over the start (default { symbols: 8192, passes: 2 }): the first
   * `symbols` symbols are held and adapted over `passes` times before the
   * stream is filtered from its first symbol with those taps, still adapting
   * (0 passes: no holding).
   */
  readonly convergeOnStart?: {
    /** Symbols held and adapted over (≥ 1). */
    readonly symbols: number;
    /** Passes over them (0 … 100). */
    readonly passes: number;
  };
  /**
   * Refine the carrier phase of the output over a window of 2N + 1 symbol
   * pairs and their decisions ({@link PhaseRefinement}); absent or false:
   * no refinement. Delays the output by N symbols.
   */
  readonly phaseRefinement?:
    | {
        /** N, symbols (integer 0 … 1024). */
        readonly halfWindow: number;
      }
    | false;
}

/** What {@link decisionEqualizer} reports. */
export interface DecisionEqualizerDiagnostics {
  /** Taps per filter. */
  readonly taps: number;
  /** Symbols delivered so far, per polarization. */
  readonly symbols: number;
  /** Half window of the phase refinement of the output, symbols; null without one. */
  readonly phaseRefinementHalfWindow: number | null;
  /** Mean |d − z|² of the outputs against their decisions over the last 4,096 symbols delivered, per polarization. */
  readonly decisionErrorPower: {
    /** Of the x output. */
    readonly x: number;
    /** Of the y output. */
    readonly y: number;
  };
  /** The taps now. */
  readonly finalTaps: ButterflyTaps;
}

/** Symbols over which the decision error power is averaged. */
const ERROR_WINDOW = 4096;

/**
 * A symbol-spaced 2×2 equalizer adapted by decision-directed LMS on
 * carrier-recovered symbols: it refines what the blind equalizer left
 * (the residual inter-symbol interference and polarization crosstalk of
 * CMA's and RDE's misadjustment, largest for dense constellations near the
 * FEC thresholds) with decisions that know the phase. With the input after
 * carrier recovery, the decision error needs no phase loop of its own:
 *
 *   x̂ₖ = Σⱼ hxx[j]·xₖ₊c₋ⱼ + hxy[j]·yₖ₊c₋ⱼ  (and ŷₖ likewise),   eₖ = dec(x̂ₖ) − x̂ₖ,   h ← h + μ·eₖ·u*
 *
 * (LMS: Widrow & Hoff 1960; a decision-directed equalizer after carrier
 * recovery is common practice.) A cycle slip of the carrier recovery turns
 * the decisions with the symbols, so the error, and the taps, do not see
 * it. Starts from a centre spike; converges over the start of the stream
 * before its output begins (see `convergeOnStart`). Block-size invariant.
 * @throws OptionError for any option out of range
 * @example const refine = decisionEqualizer({ modulation: '64qam', taps: 9 });
 */
export function decisionEqualizer(options: DecisionEqualizerOptions): Stage<'symbols', 'symbols', DecisionEqualizerDiagnostics> {
  return new DecisionEqualizer(options);
}

class DecisionEqualizer implements Stage<'symbols', 'symbols', DecisionEqualizerDiagnostics> {
  readonly name = NAME;
  readonly input = 'symbols' as const;
  readonly output = 'symbols' as const;
  private readonly c: Constellation;
  private readonly L: number;
  private readonly centre: number;
  private readonly mu: number;
  private readonly startSymbols: number;
  private readonly passes: number;
  private readonly taps: Float64Array;
  private readonly z = new Float64Array(4);
  private readonly errors = new Float64Array(2 * ERROR_WINDOW);
  private errorFill = 0;
  private errorPos = 0;
  /** The start of the stream, held for the passes (null once they are done, or without passes). */
  private span: LeadingSpan<FieldBlock<'symbols'>> | null = null;
  /** Input symbols whose windows are not complete yet, from input index `lineStart`. */
  private lineX = complexArray(0);
  private lineY = complexArray(0);
  private lineStart = 0;
  private received = 0;
  private delivered = 0;
  private sampleRate = Number.NaN;
  /** Refines the output's carrier phase, when asked for. */
  private readonly refinement: PhaseRefinement | null;
  /** Symbols given out (after the refinement's look-ahead). */
  private given = 0;

  constructor(o: DecisionEqualizerOptions) {
    const fail = (option: string, expected: string, received: unknown): never => {
      throw new OptionError(NAME, option, expected, received);
    };
    if (o === null || typeof o !== 'object') fail('options', 'an options object', o);
    checkModulation(NAME, 'modulation', o.modulation);
    const L = o.taps ?? 9;
    if (!Number.isInteger(L) || L < 1 || L > 63 || L % 2 === 0) fail('taps', 'an odd integer from 1 to 63', o.taps);
    const mu = o.stepSize ?? 3e-4;
    if (!(mu > 0 && mu < 1)) fail('stepSize', 'a number in (0, 1)', o.stepSize);
    const start = o.convergeOnStart ?? { symbols: 8192, passes: 2 };
    if (!Number.isInteger(start.symbols) || start.symbols < 1) fail('convergeOnStart.symbols', 'an integer ≥ 1', start.symbols);
    if (!Number.isInteger(start.passes) || start.passes < 0 || start.passes > 100)
      fail('convergeOnStart.passes', 'an integer from 0 to 100', start.passes);
    const refine = o.phaseRefinement;
    if (refine !== undefined && refine !== false) {
      const n = (refine as { halfWindow?: unknown } | null)?.halfWindow;
      if (!Number.isInteger(n) || (n as number) < 0 || (n as number) > 1024)
        fail('phaseRefinement.halfWindow', 'an integer from 0 to 1024', n);
    }
    this.c = constellation(o.modulation);
    this.refinement = refine ? new PhaseRefinement(this.c, refine.halfWindow) : null;
    this.L = L;
    this.centre = (L - 1) / 2;
    this.mu = mu;
    this.startSymbols = start.symbols;
    this.passes = start.passes;
    this.taps = new Float64Array(8 * L);
    this.reset();
  }

  process(block: FieldBlock<'symbols'>): FieldBlock<'symbols'> {
    checkBlock(NAME, block, 'symbols');
    this.sampleRate = checkRate(NAME, this.sampleRate, block.sampleRate);
    if (this.span !== null) {
      const held = this.span.push(block);
      return held === null ? this.out(complexArray(0), complexArray(0)) : this.startFromHeld(held, false);
    }
    return this.stream(block.x, block.y, false);
  }

  flush(): FieldBlock<'symbols'> | null {
    if (Number.isNaN(this.sampleRate)) return null;
    const held = this.span?.finish() ?? null;
    if (held !== null) return this.startFromHeld(held, true);
    return this.stream(complexArray(0), complexArray(0), true);
  }

  reset(): void {
    this.taps.fill(0);
    this.taps[FILTER_XX * this.L + 2 * this.centre] = 1;
    this.taps[FILTER_YY * this.L + 2 * this.centre] = 1;
    this.span = this.passes > 0 ? new LeadingSpan(this.startSymbols) : null;
    this.lineX = complexArray(this.centre);
    this.lineY = complexArray(this.centre);
    this.lineStart = -this.centre;
    this.received = 0;
    this.delivered = 0;
    this.given = 0;
    this.refinement?.reset();
    this.sampleRate = Number.NaN;
    this.errors.fill(0);
    this.errorFill = 0;
    this.errorPos = 0;
  }

  diagnostics(): DecisionEqualizerDiagnostics {
    const L = this.L;
    const filter = (offset: number) => this.taps.slice(offset * L, offset * L + 2 * L) as ComplexArray;
    let ex = 0;
    let ey = 0;
    for (let i = 0; i < this.errorFill; i++) {
      ex += this.errors[2 * i];
      ey += this.errors[2 * i + 1];
    }
    const n = this.errorFill;
    return {
      taps: L,
      symbols: this.given,
      phaseRefinementHalfWindow: this.refinement?.halfWindow ?? null,
      decisionErrorPower: { x: n > 0 ? ex / n : Number.NaN, y: n > 0 ? ey / n : Number.NaN },
      finalTaps: { xx: filter(FILTER_XX), xy: filter(FILTER_XY), yx: filter(FILTER_YX), yy: filter(FILTER_YY) },
    };
  }

  describe(): StageRecord {
    return {
      stage: NAME,
      options: {
        modulation: this.c.name,
        taps: this.L,
        stepSize: this.mu,
        convergeOnStart: { symbols: this.startSymbols, passes: this.passes },
        phaseRefinement: this.refinement ? { halfWindow: this.refinement.halfWindow } : null,
      },
    };
  }

  /** The block given out: the equalized symbols, through the phase refinement when there is one. */
  private out(x: ComplexArray, y: ComplexArray, final = false): FieldBlock<'symbols'> {
    let ox = x;
    let oy = y;
    if (this.refinement !== null) {
      const r = this.refinement.process(x, y);
      ox = r.x;
      oy = r.y;
      if (final) {
        const tail = this.refinement.finish();
        ox = concatComplex([ox, tail.x]);
        oy = concatComplex([oy, tail.y]);
      }
    }
    this.given += ox.length >> 1;
    return fieldBlock('symbols', ox, oy, this.sampleRate, 1);
  }

  /** Adapts over the held start `passes` times, then streams everything held from its first symbol. */
  private startFromHeld(
    held: { all: FieldBlock<'symbols'>; calibration: FieldBlock<'symbols'> },
    final: boolean,
  ): FieldBlock<'symbols'> {
    this.span = null;
    const { x, y } = held.calibration;
    const n = x.length >> 1;
    const c = this.centre;
    // The start with c zeros of history before it and c after it, as the stream sees its edges.
    const ux = new Float64Array(2 * (n + 2 * c));
    const uy = new Float64Array(2 * (n + 2 * c));
    ux.set(x, 2 * c);
    uy.set(y, 2 * c);
    for (let p = 0; p < this.passes; p++) this.run(ux, uy, 2 * c, n, null, null);
    return this.stream(held.all.x, held.all.y, final);
  }

  /** Filters (and adapts on) every symbol whose window is complete; `final` pads the end with zeros. */
  private stream(x: ComplexArray, y: ComplexArray, final: boolean): FieldBlock<'symbols'> {
    const c = this.centre;
    const nNew = x.length >> 1;
    const lineLen = this.lineX.length >> 1;
    const pad = final ? c : 0;
    const ux = new Float64Array(2 * (lineLen + nNew + pad));
    const uy = new Float64Array(2 * (lineLen + nNew + pad));
    ux.set(this.lineX);
    uy.set(this.lineY);
    ux.set(x, 2 * lineLen);
    uy.set(y, 2 * lineLen);
    this.received += nNew;
    // Symbol k needs inputs up to k + c; at the end, every real symbol is delivered.
    const last = final ? this.received - 1 : this.lineStart + lineLen + nNew - 1 - c;
    const count = Math.max(0, last - this.delivered + 1);
    const outX = complexArray(count);
    const outY = complexArray(count);
    this.run(ux, uy, this.delivered + c - this.lineStart, count, outX, outY);
    this.delivered += count;
    const keepFrom = this.delivered - c - this.lineStart;
    this.lineX = ux.slice(2 * keepFrom, 2 * (lineLen + nNew)) as ComplexArray;
    this.lineY = uy.slice(2 * keepFrom, 2 * (lineLen + nNew)) as ComplexArray;
    this.lineStart += keepFrom;
    return this.out(outX, outY, final);
  }

  /**
   * Filters and adapts `count` symbols, the first with its newest window
   * sample at complex index `newest0` of the delay lines, the next ones one
   * sample later; writes the outputs when `outX`/`outY` are given.
   */
  private run(
    ux: Float64Array,
    uy: Float64Array,
    newest0: number,
    count: number,
    outX: Float64Array | null,
    outY: Float64Array | null,
  ): void {
    const z = this.z;
    const con = this.c;
    const square = con.square;
    const scale = con.scale;
    const top = con.levelsPerAxis - 1;
    for (let k = 0; k < count; k++) {
      const newest = newest0 + k;
      butterflyOutput(this.taps, this.L, ux, uy, newest, z);
      let exr: number;
      let exi: number;
      let eyr: number;
      let eyi: number;
      if (square) {
        exr = nearestLevel(z[0], scale, top) - z[0];
        exi = nearestLevel(z[1], scale, top) - z[1];
        eyr = nearestLevel(z[2], scale, top) - z[2];
        eyi = nearestLevel(z[3], scale, top) - z[3];
      } else {
        const lx = nearestLabel(con, z[0], z[1]);
        const ly = nearestLabel(con, z[2], z[3]);
        exr = con.points[2 * lx] - z[0];
        exi = con.points[2 * lx + 1] - z[1];
        eyr = con.points[2 * ly] - z[2];
        eyi = con.points[2 * ly + 1] - z[3];
      }
      updateRow(this.taps, this.L, ux, uy, newest, 0, exr, exi, this.mu);
      updateRow(this.taps, this.L, ux, uy, newest, 1, eyr, eyi, this.mu);
      if (outX !== null && outY !== null) {
        outX[2 * k] = z[0];
        outX[2 * k + 1] = z[1];
        outY[2 * k] = z[2];
        outY[2 * k + 1] = z[3];
        const p = 2 * this.errorPos;
        this.errors[p] = exr * exr + exi * exi;
        this.errors[p + 1] = eyr * eyr + eyi * eyi;
        this.errorPos = this.errorPos + 1 === ERROR_WINDOW ? 0 : this.errorPos + 1;
        if (this.errorFill < ERROR_WINDOW) this.errorFill++;
      }
    }
  }
}
