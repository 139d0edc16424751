import { type ChannelBlock, fromParts, type SpectrumSummary, summarizeSpectrum, WelchEstimator } from '@intradyne/core';

/** Fewest samples for a spectrum: 64 (eight segments of eight). */
export const MIN_SPECTRUM_SAMPLES = 64;

/**
 * Narrowest band taken for a modulated signal, in frequency bins of the
 * Welch estimate: 16. A tone or a constant level (DC) spreads over the
 * window's main lobe and the summary's smoothing, about 7 bins of a
 * 1024-point segment; a signal of at most 64 samples per symbol covers 16 or
 * more.
 */
export const MIN_BAND_BINS = 16;

/** What the spectrum of a capture says: its summary and the symbol rate, or why there is none. */
export interface SpectrumEstimate {
  /** The summary of the Welch PSD of x and y, or null when the spectrum holds no band (see `reason`). */
  readonly summary: SpectrumSummary | null;
  /** Estimated symbol rate, Bd, or null (see `reason`). */
  readonly symbolRateBd: number | null;
  /** Why there is no estimate, in words; null when there is one. */
  readonly reason: string | null;
  /** Samples per Welch segment. */
  readonly segmentLength: number;
  /** Segments averaged (both polarizations). */
  readonly segments: number;
  /** Frequency resolution, Hz. */
  readonly resolutionHz: number;
}

/**
 * Accumulates the Welch power spectrum of x = xi + j·xq and y = yi + j·yq
 * over a capture's blocks and estimates the symbol rate from it (see
 * `summarizeSpectrum`). The segment is `segmentLength` samples, shortened
 * to a power of two giving about eight segments for a short capture; the
 * first blocks are held until that is settled. A spectrum without a band
 * (all zeros, a constant level, a pure tone) gives no estimate and says
 * why, rather than a number.
 */
export class SpectrumAccumulator {
  private welch: [WelchEstimator, WelchEstimator] | null = null;
  private readonly head: ChannelBlock[] = [];
  private headSamples = 0;
  private sampleRate = Number.NaN;
  /** Samples taken so far. */
  samples = 0;

  constructor(private readonly segmentLength = 1024) {}

  /** Takes the next block. */
  push(b: ChannelBlock): void {
    this.sampleRate = b.sampleRate;
    this.samples += b.xi.length;
    if (this.welch) {
      this.feed(b);
      return;
    }
    this.head.push(b);
    this.headSamples += b.xi.length;
    if (this.headSamples >= 8 * this.segmentLength) this.start(this.segmentLength);
  }

  /**
   * The spectrum and the estimate.
   * @returns null when fewer than {@link MIN_SPECTRUM_SAMPLES} samples came
   */
  result(): SpectrumEstimate | null {
    if (!this.welch) {
      if (this.samples < MIN_SPECTRUM_SAMPLES) return null;
      // Fewer than 8 segments: shorten the segment to a power of two giving about 8.
      let n = 8;
      while (n * 2 * 8 <= this.samples && n * 2 <= this.segmentLength) n *= 2;
      this.start(n);
    }
    const [wx, wy] = this.welch as [WelchEstimator, WelchEstimator];
    const px = wx.result();
    const py = wy.result();
    const psd = px.psd.map((v, i) => (v + py.psd[i]) / 2);
    const base = { segmentLength: px.psd.length, segments: px.segments + py.segments, resolutionHz: px.resolutionHz };
    let summary: SpectrumSummary;
    try {
      summary = summarizeSpectrum({ ...px, psd, segments: base.segments });
    } catch (e) {
      // The summary's documented refusal: no signal above the floor, or no band of positive width.
      if (!(e instanceof RangeError)) throw e;
      return {
        ...base,
        summary: null,
        symbolRateBd: null,
        reason: `no band in the spectrum (${e.message.replace(/^summarizeSpectrum: /, '')})`,
      };
    }
    if (!(summary.bandwidth3dBHz >= MIN_BAND_BINS * px.resolutionHz) || !(summary.symbolRateBd > 0)) {
      return {
        ...base,
        summary,
        symbolRateBd: null,
        reason: `the band is narrower than ${MIN_BAND_BINS} frequency bins of ${px.resolutionHz} Hz: a tone or a constant level, not a modulated signal`,
      };
    }
    return { ...base, summary, symbolRateBd: summary.symbolRateBd, reason: null };
  }

  private start(segmentLength: number): void {
    this.welch = [new WelchEstimator(this.sampleRate, { segmentLength }), new WelchEstimator(this.sampleRate, { segmentLength })];
    for (const h of this.head.splice(0)) this.feed(h);
  }

  private feed(b: ChannelBlock): void {
    const [wx, wy] = this.welch as [WelchEstimator, WelchEstimator];
    wx.push(fromParts(b.xi, b.xq));
    wy.push(fromParts(b.yi, b.yq));
  }
}
