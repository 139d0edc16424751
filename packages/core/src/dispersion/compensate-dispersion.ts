import { combineRails } from '../frontend/combine-channels.js';
import { deskewChannels } from '../frontend/deskew-channels.js';
import { estimateIqSkew, fieldToChannels, type IqSkewEstimate } from '../frontend/iq-skew.js';
import { checkBlock, checkRate } from '../pipeline/block-checks.js';
import { type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import { OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { type ComplexArray, concatComplex } from '../signal/complex.js';
import type { DualPol } from '../signal/dual-pol.js';
import { type BlindDispersionOptions, estimateDispersion } from './blind-dispersion.js';
import { cdTapCount, dispersionCompensationResponse } from './dispersion-filter.js';
import { OverlapSave, overlapSaveSize } from './overlap-save.js';

/** Options of {@link compensateDispersion}: exactly one of `dispersionPsPerNm`, `fibre` or `blind`. */
export interface CompensateDispersionOptions {
  /** Accumulated dispersion D·z to remove, ps/nm (exclusive with `fibre` and `blind`). */
  readonly dispersionPsPerNm?: number;
  /** The same as a fibre: D in ps/(nm·km) times its length in km. */
  readonly fibre?: {
    /** Dispersion parameter D, ps/(nm·km) (about 17 for standard single-mode fibre at 1550 nm). */
    readonly dispersionPsPerNmKm: number;
    /** Fibre length, km. */
    readonly lengthKm: number;
  };
  /**
   * Estimate the dispersion blindly on the first `blind.samples` samples
   * (default 32,768 per polarization, held back until they have arrived)
   * with {@link estimateDispersion}; `true` for the defaults.
   */
  readonly blind?: true | BlindDispersionOptions;
  /** Carrier wavelength, nm (default 1550). */
  readonly wavelengthNm?: number;
  /** FFT size, a power of two larger than twice the overlap (default: the cheapest per sample). */
  readonly fftSize?: number;
  /**
   * 'estimate': estimate the receiver's I/Q skew of each polarization on
   * the first `iqSkewSamples` samples (held back until they arrive) and
   * remove it from the rails before the dispersion (see
   * {@link estimateIqSkew}). A skew is a delay of one rail, which the
   * dispersion compensation would turn into an image of the field that no
   * later equalizer removes, so it is undone here, where the dispersion is
   * known. Absent: no skew handling (a skew given by the descriptor is
   * removed at the scope's rate by the `deskew` stage instead).
   */
  readonly iqSkew?: 'estimate';
  /** Samples per polarization of the skew estimate (integer ≥ 4,096, default 262,144: its noise costs dense constellations a tenth of a dB at half that). */
  readonly iqSkewSamples?: number;
}

/** What {@link compensateDispersion} did. */
export interface CompensateDispersionDiagnostics {
  /** Dispersion removed, ps/nm (NaN until known). */
  readonly dispersionPsPerNm: number;
  /** True when it was estimated blindly. */
  readonly estimated: boolean;
  /** Savory's tap count for it at the block's rate (0 until known). */
  readonly taps: number;
  /** FFT size of the overlap-save blocks, samples (0 until known). */
  readonly fftSize: number;
  /** Samples each block shares with the previous one, the filter's memory (0 until known). */
  readonly overlap: number;
  /** The blind estimate's cost at its minimum (NaN when given). */
  readonly cost: number;
  /** The I/Q skew found and removed (see {@link estimateIqSkew}; a NaN skew is not removed); null when not estimated. */
  readonly iqSkew: IqSkewEstimate | null;
}

/**
 * Chromatic-dispersion compensation at 2 samples per symbol by a
 * frequency-domain overlap-save filter that inverts the fibre's all-pass
 * response (Savory, Opt. Express 16(2), 2008):
 *
 *   Y[k] = X[k]·exp(−jφ(f_k)),  φ(f) = −π·λ²·(D·z)·f²/c
 *
 * Sign convention: {@link dispersionPhase} is the fibre's phase — the
 * simulator multiplies by exp(jφ) — and this stage multiplies by exp(−jφ);
 * a positive `dispersionPsPerNm` removes the dispersion of a positive-D fibre.
 *
 * Sizing: the overlap is Savory's tap count N = 2⌊|D|λ²z/(2cT²)⌋ + 1 (the
 * impulse response's extent at T = 1/fs) rounded up to an even number, plus
 * 64 samples for the response's ringing beyond it; the FFT size is the power
 * of two that minimizes the work per sample (at least twice the overlap).
 * The output has as many samples as the input, without delay.
 *
 * @throws OptionError unless exactly one of dispersionPsPerNm, fibre, blind is given, or for values out of range
 * @example const cd = compensateDispersion({ fibre: { dispersionPsPerNmKm: 17, lengthKm: 80 } }); // 1,360 ps/nm
 */
export function compensateDispersion(
  options: CompensateDispersionOptions,
): Stage<'twoSps', 'twoSps', CompensateDispersionDiagnostics> {
  return new CompensateDispersion(options);
}

class CompensateDispersion implements Stage<'twoSps', 'twoSps', CompensateDispersionDiagnostics> {
  readonly name = 'compensate-dispersion';
  readonly input = 'twoSps' as const;
  readonly output = 'twoSps' as const;
  private readonly given: number | null;
  private readonly blind: BlindDispersionOptions | null;
  private readonly blindSamples: number;
  private readonly wavelengthNm: number;
  private readonly fftSizeOption: number | undefined;
  private readonly record: CompensateDispersionOptions;
  private readonly skewSamples: number;
  private ex: OverlapSave | null = null;
  private response: ComplexArray | null = null;
  private overlap = 0;
  private deskew: Stage<'channels', 'channels', unknown> | null = null;
  private skew: IqSkewEstimate | null = null;
  private ey: OverlapSave | null = null;
  private held: FieldBlock<'twoSps'>[] = [];
  private heldCount = 0;
  private value = Number.NaN;
  private cost = Number.NaN;
  private taps = 0;
  private sampleRate = Number.NaN;

  constructor(o: CompensateDispersionOptions) {
    this.record = o;
    const given = [o.dispersionPsPerNm !== undefined, o.fibre !== undefined, o.blind !== undefined].filter(Boolean).length;
    if (given !== 1) {
      throw new OptionError(this.name, 'dispersionPsPerNm', 'exactly one of dispersionPsPerNm, fibre or blind', o);
    }
    this.wavelengthNm = o.wavelengthNm ?? 1550;
    if (!(this.wavelengthNm > 0 && Number.isFinite(this.wavelengthNm))) {
      throw new OptionError(this.name, 'wavelengthNm', 'a positive wavelength in nm', o.wavelengthNm);
    }
    if (o.fftSize !== undefined && !(Number.isInteger(Math.log2(o.fftSize)) && o.fftSize >= 64)) {
      throw new OptionError(this.name, 'fftSize', 'a power of two ≥ 64', o.fftSize);
    }
    this.fftSizeOption = o.fftSize;
    this.given = null;
    this.blind = null;
    this.blindSamples = 0;
    if (o.dispersionPsPerNm !== undefined) {
      if (!Number.isFinite(o.dispersionPsPerNm)) {
        throw new OptionError(this.name, 'dispersionPsPerNm', 'a finite dispersion in ps/nm', o.dispersionPsPerNm);
      }
      this.given = o.dispersionPsPerNm;
    } else if (o.fibre !== undefined) {
      const { dispersionPsPerNmKm: d, lengthKm: l } = o.fibre;
      if (!Number.isFinite(d)) throw new OptionError(this.name, 'fibre.dispersionPsPerNmKm', 'a finite D in ps/(nm·km)', d);
      if (!(l >= 0 && Number.isFinite(l))) throw new OptionError(this.name, 'fibre.lengthKm', 'a length ≥ 0 km', l);
      this.given = d * l;
    } else {
      this.blind = o.blind === true ? {} : { ...o.blind };
      const s = this.blind.samples ?? 32_768;
      if (!(Number.isInteger(Math.log2(s)) && s >= 1024)) {
        throw new OptionError(this.name, 'blind.samples', 'a power of two ≥ 1024', this.blind.samples);
      }
      const lo = this.blind.minPsPerNm ?? -5000;
      const hi = this.blind.maxPsPerNm ?? 25_000;
      if (!(hi > lo && Number.isFinite(lo) && Number.isFinite(hi))) {
        throw new OptionError(this.name, 'blind.maxPsPerNm', `a range with minPsPerNm < maxPsPerNm (min ${lo})`, hi);
      }
      this.blindSamples = s;
    }
    if (o.iqSkew !== undefined && o.iqSkew !== 'estimate') throw new OptionError(this.name, 'iqSkew', "'estimate'", o.iqSkew);
    this.skewSamples = o.iqSkew === 'estimate' ? (o.iqSkewSamples ?? 262_144) : 0;
    if (o.iqSkew === 'estimate' && !(Number.isInteger(this.skewSamples) && this.skewSamples >= 4096))
      throw new OptionError(this.name, 'iqSkewSamples', 'an integer ≥ 4096', o.iqSkewSamples);
  }

  /** Samples held at the start: for the blind estimate and the skew estimate. */
  private get span(): number {
    return Math.max(this.blindSamples, this.skewSamples);
  }

  process(block: FieldBlock<'twoSps'>): FieldBlock<'twoSps'> {
    checkBlock(this.name, block, 'twoSps');
    this.sampleRate = checkRate(this.name, this.sampleRate, block.sampleRate);
    if (!this.ex) {
      if (this.span === 0) this.build(this.given as number);
      else {
        this.held.push(block);
        this.heldCount += block.x.length >> 1;
        if (this.heldCount < this.span)
          return fieldBlock(
            'twoSps',
            block.x.subarray(0, 0) as ComplexArray,
            block.y.subarray(0, 0) as ComplexArray,
            block.sampleRate,
            2,
          );
        return this.releaseHeld();
      }
    }
    return this.filter(block);
  }

  flush(): FieldBlock<'twoSps'> | null {
    if (Number.isNaN(this.sampleRate)) return null;
    const parts: FieldBlock<'twoSps'>[] = [];
    if (!this.ex) {
      if (this.blind !== null && this.heldCount < 1024) {
        // Too short to estimate anything: pass the samples through untouched.
        const x = concatComplex(this.held.map((b) => b.x));
        const y = concatComplex(this.held.map((b) => b.y));
        this.held = [];
        this.heldCount = 0;
        return fieldBlock('twoSps', x, y, this.sampleRate, 2);
      }
      parts.push(this.releaseHeld());
    }
    const rest = this.deskew?.flush();
    if (rest) parts.push(this.filter(combineRails(rest), false));
    const x = this.ex!.flush();
    const y = this.ey!.flush();
    if (parts.length === 0) return fieldBlock('twoSps', x, y, this.sampleRate, 2);
    return fieldBlock(
      'twoSps',
      concatComplex([...parts.map((b) => b.x), x]),
      concatComplex([...parts.map((b) => b.y), y]),
      this.sampleRate,
      2,
    );
  }

  reset(): void {
    this.ex = null;
    this.ey = null;
    this.response = null;
    this.deskew = null;
    this.skew = null;
    this.held = [];
    this.heldCount = 0;
    this.value = Number.NaN;
    this.cost = Number.NaN;
    this.taps = 0;
    this.sampleRate = Number.NaN;
  }

  diagnostics(): CompensateDispersionDiagnostics {
    return {
      dispersionPsPerNm: this.value,
      estimated: this.blind !== null,
      taps: this.taps,
      fftSize: this.ex?.fftSize ?? 0,
      overlap: this.ex?.overlap ?? 0,
      cost: this.cost,
      iqSkew: this.skew,
    };
  }

  describe(): StageRecord {
    const o = this.record;
    return {
      stage: this.name,
      options: {
        dispersionPsPerNm: o.dispersionPsPerNm ?? null,
        fibre: o.fibre ? { ...o.fibre } : null,
        blind: this.blind ? { ...this.blind } : null,
        wavelengthNm: this.wavelengthNm,
        fftSize: this.fftSizeOption ?? null,
        iqSkew: this.skewSamples > 0 ? 'estimate' : null,
        ...(this.skewSamples > 0 ? { iqSkewSamples: this.skewSamples } : {}),
      },
    };
  }

  private releaseHeld(): FieldBlock<'twoSps'> {
    const x = concatComplex(this.held.map((b) => b.x));
    const y = concatComplex(this.held.map((b) => b.y));
    this.held = [];
    this.heldCount = 0;
    if (this.blind !== null) {
      const e = estimateDispersion(x, y, this.sampleRate, { ...this.blind, samples: this.blindSamples });
      this.cost = e.cost;
      this.build(e.dispersionPsPerNm);
    } else this.build(this.given as number);
    if (this.skewSamples > 0 && x.length >= 2 * 1024) this.startDeskew(x, y);
    return this.filter({ x, y }, true);
  }

  /** Estimates the I/Q skews on the start of the held samples and sets up their removal. */
  private startDeskew(x: ComplexArray, y: ComplexArray): void {
    const n = Math.min(x.length >> 1, this.skewSamples);
    const span = { x: x.subarray(0, 2 * n) as ComplexArray, y: y.subarray(0, 2 * n) as ComplexArray };
    const response = this.response as ComplexArray;
    const compensate = (f: DualPol): DualPol => {
      const run = (z: ComplexArray) => {
        const os = new OverlapSave(response, this.overlap);
        return concatComplex([os.process(z), os.flush()]);
      };
      return { x: run(f.x), y: run(f.y) };
    };
    this.skew = estimateIqSkew(span, this.sampleRate / 2, compensate);
    const xq = Number.isNaN(this.skew.xPs) ? 0 : this.skew.xPs;
    const yq = Number.isNaN(this.skew.yPs) ? 0 : this.skew.yPs;
    if (xq !== 0 || yq !== 0) this.deskew = deskewChannels({ skewPs: { xq, yq } });
  }

  private build(psPerNm: number): void {
    const lambda = this.wavelengthNm * 1e-9;
    this.value = psPerNm;
    this.taps = cdTapCount(psPerNm, this.sampleRate, lambda);
    const overlap = 2 * Math.ceil(this.taps / 2) + 64;
    const n = this.fftSizeOption ?? overlapSaveSize(overlap);
    if (n <= overlap) {
      throw new OptionError(this.name, 'fftSize', `a power of two above the overlap of ${overlap} samples`, n);
    }
    const response = dispersionCompensationResponse(n, this.sampleRate, psPerNm, lambda);
    this.response = response;
    this.overlap = overlap;
    this.ex = new OverlapSave(response, overlap);
    this.ey = new OverlapSave(response, overlap);
  }

  /** Deskews the rails (when a skew is removed; not for what the deskew flushed) and compensates. */
  private filter(f: DualPol, deskew = true): FieldBlock<'twoSps'> {
    let { x, y } = f;
    if (deskew && this.deskew) {
      const block = fieldBlock('twoSps', x, y, this.sampleRate, 2);
      ({ x, y } = combineRails(this.deskew.process(fieldToChannels(block))));
    }
    return fieldBlock('twoSps', this.ex!.process(x), this.ey!.process(y), this.sampleRate, 2);
  }
}
