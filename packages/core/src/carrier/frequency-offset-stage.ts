import { checkBlock, checkRate } from '../pipeline/block-checks.js';
import { type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import { OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { type ComplexArray, complexArray, concatComplex } from '../signal/complex.js';
import { estimateOffsetDifferential } from './differential-frequency.js';
import { estimateOffsetPeriodogram } from './fourth-power-periodogram.js';
import { removeFrequencyOffset } from './frequency-removal.js';

/** How the offset is estimated. */
export type FrequencyEstimator = 'periodogram' | 'differential';

/** Options of {@link frequencyOffsetRecovery}. */
export interface FrequencyOffsetOptions {
  /**
   * 'periodogram' (default): fourth-power periodogram with sub-bin
   * interpolation (Selmi, Jaouën, Ciblat, ECOC 2009); 'differential': the
   * adjacent-symbol estimator (Leven et al., IEEE PTL 19(6), 2007).
   */
  readonly method?: FrequencyEstimator;
  /**
   * Fixed mode (the default): the offset is estimated once on the first
   * `estimateSymbols` symbols of the stream (default 16384, at least 16),
   * which are held back until then, and removed from the whole stream.
   */
  readonly estimateSymbols?: number;
  /**
   * Tracking mode, for a drifting offset: when given, the stream is cut into
   * segments of exactly this many symbols (at least 64), counted from the
   * start of the stream whatever the block sizes; each segment is estimated
   * on itself and de-rotated with its own estimate, the phase running on
   * without a step from one segment to the next. The last, shorter segment
   * uses the previous segment's estimate (its own when it is the only one).
   * Excludes `estimateSymbols`.
   */
  readonly trackingSymbols?: number;
  /** Zero-padding factor of the periodogram (1, 2, 4, 8 or 16; default 4). */
  readonly padding?: number;
  /**
   * A known offset, Hz: removed as it is from the whole stream, nothing
   * estimated and nothing held back (excludes `estimateSymbols` and
   * `trackingSymbols`). 0 passes the symbols through: for shaped QAM,
   * whose fourth power holds no tone to estimate from, once the offset was
   * found against the reference and removed before.
   */
  readonly freqOffsetHz?: number;
}

/** One estimate of the offset and the span of symbols it was made on and removed from. */
export interface FrequencyEstimate {
  /** Index of the first symbol of the span, from the start of the stream. */
  readonly startSymbol: number;
  /** Symbols in the span. */
  readonly symbols: number;
  /** Δf̂, Hz. */
  readonly freqOffsetHz: number;
}

/** What the frequency-offset stage learned. */
export interface FrequencyOffsetDiagnostics {
  /**
   * The estimate in Hz, signed so that the received x rotates as
   * exp(+j2π·freqOffsetHz·t); in tracking mode the symbol-weighted mean of
   * the track. NaN until the first estimate is made.
   */
  readonly freqOffsetHz: number;
  /** Every estimate in stream order: one in fixed mode, one per segment in tracking mode. */
  readonly track: readonly FrequencyEstimate[];
  /** Symbols delivered so far, per polarization. */
  readonly symbols: number;
}

const NAME = 'frequency-offset';
/** Symbols between exact phase anchors in fixed mode. */
const ANCHOR_SYMBOLS = 4096;

/**
 * Frequency-offset estimation and removal on symbol-rate, dual-polarization
 * blocks (one sample per symbol; the block's sample rate is the symbol rate).
 * Both polarizations share one estimate (same lasers). The estimate's range
 * is |Δf| < Rs/8; an offset beyond it aliases by a multiple of Rs/4 (see
 * {@link estimateOffsetPeriodogram}).
 *
 * Output is identical whatever the block sizes: estimation spans are counted
 * in symbols from the start of the stream, and the removal phase of every
 * symbol depends only on its index.
 *
 * @throws OptionError for a bad method, span, padding, or both modes at once
 * @example
 * const fo = frequencyOffsetRecovery({ trackingSymbols: 8192 });
 * const out = fo.process(symbolBlock); const tail = fo.flush();
 * fo.diagnostics().track; // [{ startSymbol: 0, symbols: 8192, freqOffsetHz: … }, …]
 */
export function frequencyOffsetRecovery(
  options: FrequencyOffsetOptions = {},
): Stage<'symbols', 'symbols', FrequencyOffsetDiagnostics> {
  return new FrequencyOffsetStage(options);
}

class FrequencyOffsetStage implements Stage<'symbols', 'symbols', FrequencyOffsetDiagnostics> {
  readonly name = NAME;
  readonly input = 'symbols' as const;
  readonly output = 'symbols' as const;
  private readonly method: FrequencyEstimator;
  private readonly span: number;
  private readonly tracking: boolean;
  private readonly padding: number;

  private pendingX: ComplexArray[] = [];
  private pendingY: ComplexArray[] = [];
  private pendingCount = 0;
  /** Current estimate (NaN before the first). */
  private current = Number.NaN;
  /** Phase of the next symbol to de-rotate. */
  private phase = 0;
  private delivered = 0;
  private track: FrequencyEstimate[] = [];
  private sampleRate = Number.NaN;
  /** The offset given, or null to estimate it. */
  private readonly known: number | null;

  constructor(o: FrequencyOffsetOptions) {
    const method = o.method ?? 'periodogram';
    if (method !== 'periodogram' && method !== 'differential')
      throw new OptionError(NAME, 'method', "'periodogram' or 'differential'", method);
    if (o.trackingSymbols !== undefined && o.estimateSymbols !== undefined)
      throw new OptionError(NAME, 'trackingSymbols', 'either trackingSymbols or estimateSymbols, not both', o.trackingSymbols);
    if (o.trackingSymbols !== undefined && (!Number.isInteger(o.trackingSymbols) || o.trackingSymbols < 64))
      throw new OptionError(NAME, 'trackingSymbols', 'an integer ≥ 64', o.trackingSymbols);
    const estimateSymbols = o.estimateSymbols ?? 16384;
    if (!Number.isInteger(estimateSymbols) || estimateSymbols < 16)
      throw new OptionError(NAME, 'estimateSymbols', 'an integer ≥ 16', estimateSymbols);
    const padding = o.padding ?? 4;
    if (!Number.isInteger(padding) || padding < 1 || padding > 16 || (padding & (padding - 1)) !== 0)
      throw new OptionError(NAME, 'padding', '1, 2, 4, 8 or 16', padding);
    const known = o.freqOffsetHz;
    if (known !== undefined) {
      if (typeof known !== 'number' || !Number.isFinite(known))
        throw new OptionError(NAME, 'freqOffsetHz', 'a finite offset in Hz', known);
      if (o.trackingSymbols !== undefined || o.estimateSymbols !== undefined)
        throw new OptionError(NAME, 'freqOffsetHz', 'no estimate or tracking span with a known offset', known);
    }
    this.method = method;
    this.tracking = o.trackingSymbols !== undefined;
    this.span = o.trackingSymbols ?? estimateSymbols;
    this.padding = padding;
    this.known = known ?? null;
    this.reset();
  }

  process(block: FieldBlock<'symbols'>): FieldBlock<'symbols'> {
    checkBlock(NAME, block, 'symbols');
    this.sampleRate = checkRate(NAME, this.sampleRate, block.sampleRate);
    const n = block.x.length >> 1;
    const outX: ComplexArray[] = [];
    const outY: ComplexArray[] = [];
    let at = 0;
    // Fixed mode after its estimate: de-rotate straight through.
    if (!this.tracking && !Number.isNaN(this.current)) {
      this.emit(block.x.slice() as ComplexArray, block.y.slice() as ComplexArray, outX, outY);
      at = n;
    }
    while (at < n) {
      const take = Math.min(n - at, this.span - this.pendingCount);
      this.pendingX.push(block.x.slice(2 * at, 2 * (at + take)) as ComplexArray);
      this.pendingY.push(block.y.slice(2 * at, 2 * (at + take)) as ComplexArray);
      this.pendingCount += take;
      at += take;
      if (this.pendingCount === this.span) {
        this.finishSpan(true, outX, outY);
        if (!this.tracking && at < n) {
          this.emit(block.x.slice(2 * at) as ComplexArray, block.y.slice(2 * at) as ComplexArray, outX, outY);
          at = n;
        }
      }
    }
    return this.block(outX, outY);
  }

  flush(): FieldBlock<'symbols'> | null {
    if (this.pendingCount === 0) return null;
    const outX: ComplexArray[] = [];
    const outY: ComplexArray[] = [];
    // A short last segment in tracking mode keeps the previous estimate.
    this.finishSpan(!this.tracking || Number.isNaN(this.current), outX, outY);
    return this.block(outX, outY);
  }

  reset(): void {
    this.pendingX = [];
    this.pendingY = [];
    this.pendingCount = 0;
    this.current = Number.NaN;
    this.phase = 0;
    this.delivered = 0;
    this.track = [];
    this.sampleRate = Number.NaN;
    if (this.known !== null) {
      this.current = this.known;
      this.track.push({ startSymbol: 0, symbols: 0, freqOffsetHz: this.known });
    }
  }

  diagnostics(): FrequencyOffsetDiagnostics {
    let freqOffsetHz = Number.NaN;
    if (this.track.length > 0) {
      let sum = 0;
      let count = 0;
      for (const t of this.track) {
        sum += t.freqOffsetHz * t.symbols;
        count += t.symbols;
      }
      freqOffsetHz = sum / count;
    }
    return { freqOffsetHz, track: this.track.slice(), symbols: this.delivered };
  }

  describe(): StageRecord {
    if (this.known !== null) return { stage: NAME, options: { freqOffsetHz: this.known } };
    const options: Record<string, string | number> = { method: this.method, padding: this.padding };
    if (this.tracking) options.trackingSymbols = this.span;
    else options.estimateSymbols = this.span;
    return { stage: NAME, options };
  }

  /** Estimates on the pending span when asked, then removes the current estimate from it and emits it. */
  private finishSpan(estimate: boolean, outX: ComplexArray[], outY: ComplexArray[]): void {
    const x = concatComplex(this.pendingX);
    const y = concatComplex(this.pendingY);
    const count = this.pendingCount;
    this.pendingX = [];
    this.pendingY = [];
    this.pendingCount = 0;
    if (estimate) {
      this.current =
        this.method === 'periodogram'
          ? estimateOffsetPeriodogram(x, y, this.sampleRate, { padding: this.padding })
          : estimateOffsetDifferential(x, y, this.sampleRate);
    }
    if (this.tracking) {
      // A segment is de-rotated in one piece from the phase where the previous one ended.
      this.track.push({ startSymbol: this.delivered, symbols: count, freqOffsetHz: this.current });
      const start = this.phase;
      removeFrequencyOffset(x, this.current, this.sampleRate, start);
      this.phase = removeFrequencyOffset(y, this.current, this.sampleRate, start);
      this.delivered += count;
      outX.push(x);
      outY.push(y);
    } else {
      this.track.push({ startSymbol: 0, symbols: 0, freqOffsetHz: this.current });
      this.emit(x, y, outX, outY);
    }
  }

  /**
   * Fixed mode: de-rotates (in place) and queues for output. The phase of
   * symbol n is anchor[⌊n/A⌋] + 2πΔf·(n mod A)/Rs with anchors every A
   * symbols from the start of the stream, so that it does not depend on the
   * block sizes and stays accurate on long streams.
   */
  private emit(x: ComplexArray, y: ComplexArray, outX: ComplexArray[], outY: ComplexArray[]): void {
    const n = x.length >> 1;
    let at = 0;
    while (at < n) {
      const inAnchor = this.delivered % ANCHOR_SYMBOLS;
      const take = Math.min(n - at, ANCHOR_SYMBOLS - inAnchor);
      const sx = x.subarray(2 * at, 2 * (at + take)) as ComplexArray;
      const sy = y.subarray(2 * at, 2 * (at + take)) as ComplexArray;
      removeFrequencyOffset(sx, this.current, this.sampleRate, this.phase, inAnchor);
      const end = removeFrequencyOffset(sy, this.current, this.sampleRate, this.phase, inAnchor);
      if (inAnchor + take === ANCHOR_SYMBOLS) this.phase = end;
      this.delivered += take;
      at += take;
    }
    this.extendLast(n);
    outX.push(x);
    outY.push(y);
  }

  private extendLast(n: number): void {
    const last = this.track[this.track.length - 1];
    this.track[this.track.length - 1] = { ...last, symbols: last.symbols + n };
  }

  private block(outX: ComplexArray[], outY: ComplexArray[]): FieldBlock<'symbols'> {
    const x = outX.length === 1 ? outX[0] : outX.length === 0 ? complexArray(0) : concatComplex(outX);
    const y = outY.length === 1 ? outY[0] : outY.length === 0 ? complexArray(0) : concatComplex(outY);
    return fieldBlock('symbols', x, y, this.sampleRate, 1);
  }
}
