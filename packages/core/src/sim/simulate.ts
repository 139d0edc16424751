import { fft, ifft } from '../dsp/fft.js';
import { DEFAULT_ROLL_OFF, rootRaisedCosineSpectrum } from '../dsp/rrc.js';
import { type Constellation, checkModulation, constellation, mapBits } from '../modulation/constellation.js';
import { identityJones, type JonesMatrix, randomUnitary } from '../physics/jones.js';
import { dispersionPhase, osnrToSnrDb } from '../physics/link.js';
import { OptionError } from '../pipeline/stage.js';
import { PRBS_PATTERNS, Prbs } from '../prbs/prbs.js';
import { Rng } from '../random/rng.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';
import { CHANNEL_NAMES, type ChannelName, type DualPol, type ScopeChannels } from '../signal/dual-pol.js';
import type { SimulationOptions } from './options.js';

const NAME = 'simulate';

/** What the simulator knows that a receiver must find out. */
export interface SimulationTruth {
  /** Es/N0 per polarization at the matched-filter output, dB (Infinity when noiseless). */
  readonly esN0Db: number;
  /** Noise variance per complex sample at the scope rate, before the front end. */
  readonly noiseVariance: number;
  /** Samples per symbol actually in the capture (differs from nominal by the clock offset). */
  readonly samplesPerSymbol: number;
  /** Actual clock offset, ppm. */
  readonly clockOffsetPpm: number;
  /** Jones matrices: field out = sop · DGD(f) · psp · field in. */
  readonly psp: JonesMatrix;
  /** The SOP rotation after the DGD. */
  readonly sop: JonesMatrix;
  /** Carrier phase (frequency offset + phase noise) at each symbol instant, rad, N values. */
  readonly carrierPhase: Float64Array;
  /** Fraction of samples clipped by the ADC per channel (0 without ADC). */
  readonly clipped: Readonly<Record<ChannelName, number>>;
  /** The field just before the front end (after noise), for reference receivers in tests. */
  readonly field: DualPol;
}

/** A simulated scope capture with what was sent. */
export interface SimulatedCapture {
  /** The four real channels at the nominal scope rate sps·Rs. */
  readonly channels: ScopeChannels;
  /** Symbol rate, Bd. */
  readonly symbolRate: number;
  /** Nominal samples per symbol (the descriptor's sampleRate / symbolRate). */
  readonly samplesPerSymbol: number;
  /** The transmitted modulation. */
  readonly modulation: SimulationOptions['modulation'];
  /** Transmitter root-raised-cosine roll-off. */
  readonly rollOff: number;
  /** Transmitted symbols per polarization, N each, unit average power. */
  readonly reference: DualPol;
  /** Transmitted bits per polarization, N·log2 M each. */
  readonly bits: {
    /** Bits of x, one 0/1 per byte. */
    readonly x: Uint8Array;
    /** Bits of y. */
    readonly y: Uint8Array;
  };
  /** What the simulator drew: the impairments a receiver must find. */
  readonly truth: SimulationTruth;
}

/**
 * Simulates what a dual-polarization coherent receiver's scope records.
 *
 * Transmitter: Gray-mapped symbols with unit average power, root-raised-cosine
 * pulses synthesized in the frequency domain over one period of the pattern
 * (the capture is one period of a repeating transmission, as from an
 * arbitrary waveform generator). Channel and receiver follow
 * {@link ChannelOptions} and {@link ReceiverOptions}.
 *
 * SNR definition: Es/N0 per polarization at the symbol instants after an
 * ideal matched filter. The pulse is normalized so that an ideal RRC matched
 * filter with unit passband gain returns the symbols exactly at the symbol
 * instants; white noise of variance σ² per complex sample at sps samples per
 * symbol then has variance σ²/sps there, so σ² = sps / (Es/N0).
 *
 * @throws OptionError for any option out of range
 * @example const cap = simulate({ seed: 1, modulation: 'qpsk', symbols: 4096, symbolRate: 32e9, channel: { esN0Db: 12 } });
 */
export function simulate(options: SimulationOptions): SimulatedCapture {
  const o = validate(options);
  const rng = new Rng(o.seed);
  const c = constellation(o.modulation);
  const nSym = o.symbols;

  // Bits and symbols.
  const nBits = nSym * c.bitsPerSymbol;
  const bitsX = new Uint8Array(nBits);
  const bitsY = new Uint8Array(nBits);
  if (o.source.kind === 'prbs') {
    const g = new Prbs(o.source.order);
    g.fill(bitsX);
    g.fill(bitsY); // y continues the same sequence
  } else if (c.shaped) {
    shapedBits(c, rng, bitsX);
    shapedBits(c, rng, bitsY);
  } else {
    rng.fillBits(bitsX);
    rng.fillBits(bitsY);
  }
  const ax = mapBits(c, bitsX);
  const ay = mapBits(c, bitsY);

  // Independent streams for each random effect, so that changing one option
  // does not change the draws of another.
  const rngSop = new Rng(o.seed * 7919 + 1);
  const rngPhase = new Rng(o.seed * 7919 + 2);
  const rngNoise = new Rng(o.seed * 7919 + 3);

  // Samples in the capture, with the clock offset.
  const exact = nSym * o.samplesPerSymbol * (1 + o.clockOffsetPpm * 1e-6);
  const nOut = Math.round(exact);
  const sps = nOut / nSym;
  const clockOffsetPpm = (sps / o.samplesPerSymbol - 1) * 1e6;
  const fsTrue = sps * o.symbolRate;

  // Spectrum of the shaped, dispersed, polarization-rotated field.
  const Ax = fft(ax);
  const Ay = fft(ay);
  const Sx = complexArray(nOut);
  const Sy = complexArray(nOut);
  let psp = identityJones();
  let sop = identityJones();
  if (o.sop === 'random') {
    psp = randomUnitary(rngSop);
    sop = randomUnitary(rngSop);
  } else if (o.sop !== 'identity') {
    sop = Float64Array.from(o.sop);
  }
  const tau = o.dgdPs * 1e-12;
  const gain = nOut / nSym;
  for (let m = 0; m < nOut; m++) {
    const mm = m < nOut / 2 ? m : m - nOut;
    const f = (mm * o.symbolRate) / nSym;
    const h = rootRaisedCosineSpectrum(f, o.symbolRate, o.rollOff);
    if (h === 0) continue;
    const k = ((mm % nSym) + nSym) % nSym;
    const g = gain * h;
    // psp rotation
    let xr = g * Ax[2 * k];
    let xi = g * Ax[2 * k + 1];
    let yr = g * Ay[2 * k];
    let yi = g * Ay[2 * k + 1];
    [xr, xi, yr, yi] = apply(psp, xr, xi, yr, yi);
    // DGD: x delayed by τ/2, y advanced by τ/2; CD common to both.
    const phiCd = o.dispersionPsPerNm === 0 ? 0 : dispersionPhase(f, o.dispersionPsPerNm, o.wavelengthM);
    const px = phiCd - Math.PI * f * tau;
    const py = phiCd + Math.PI * f * tau;
    [xr, xi] = rotate(xr, xi, px);
    [yr, yi] = rotate(yr, yi, py);
    [xr, xi, yr, yi] = apply(sop, xr, xi, yr, yi);
    Sx[2 * m] = xr;
    Sx[2 * m + 1] = xi;
    Sy[2 * m] = yr;
    Sy[2 * m + 1] = yi;
  }
  const x = ifft(Sx);
  const y = ifft(Sy);

  // Carrier: frequency offset plus Wiener phase noise (per-sample increment variance 2π·Δν/fs).
  const carrierPhase = new Float64Array(nSym);
  const sigmaPn = Math.sqrt((2 * Math.PI * o.linewidthHz) / fsTrue);
  const w = (2 * Math.PI * o.freqOffsetHz) / fsTrue;
  if (o.linewidthHz > 0 || o.freqOffsetHz !== 0) {
    const theta = new Float64Array(nOut);
    let pn = 0;
    for (let n = 0; n < nOut; n++) {
      if (n > 0) pn += sigmaPn * rngPhase.gaussian();
      theta[n] = w * n + pn;
      const cr = Math.cos(theta[n]);
      const ci = Math.sin(theta[n]);
      rotateAt(x, n, cr, ci);
      rotateAt(y, n, cr, ci);
    }
    for (let k = 0; k < nSym; k++) {
      // Linear interpolation of the phase at the symbol instant k·sps.
      const t = k * sps;
      const n0 = Math.floor(t);
      const n1 = Math.min(n0 + 1, nOut - 1);
      const a = t - n0;
      carrierPhase[k] = (1 - a) * theta[n0] + a * theta[n1];
    }
  }

  // ASE noise.
  const snr = o.esN0Db === Number.POSITIVE_INFINITY ? Number.POSITIVE_INFINITY : 10 ** (o.esN0Db / 10);
  const noiseVariance = Number.isFinite(snr) ? sps / snr : 0;
  if (noiseVariance > 0) {
    const s = Math.sqrt(noiseVariance / 2);
    for (let i = 0; i < x.length; i++) {
      x[i] += s * rngNoise.gaussian();
      y[i] += s * rngNoise.gaussian();
    }
  }
  const field: DualPol = { x: x.slice() as ComplexArray, y: y.slice() as ComplexArray };

  const { channels, clipped } = frontEnd(x, y, o, fsTrue);
  return {
    channels: { ...channels, sampleRate: o.samplesPerSymbol * o.symbolRate },
    symbolRate: o.symbolRate,
    samplesPerSymbol: o.samplesPerSymbol,
    modulation: o.modulation,
    rollOff: o.rollOff,
    reference: { x: ax, y: ay },
    bits: { x: bitsX, y: bitsY },
    truth: { esN0Db: o.esN0Db, noiseVariance, samplesPerSymbol: sps, clockOffsetPpm, psp, sop, carrierPhase, clipped, field },
  };
}

function frontEnd(
  x: ComplexArray,
  y: ComplexArray,
  o: Resolved,
  fs: number,
): { channels: Omit<ScopeChannels, 'sampleRate'>; clipped: Record<ChannelName, number> } {
  const n = x.length >> 1;
  const ch: Record<ChannelName, Float64Array> = {
    xi: new Float64Array(n),
    xq: new Float64Array(n),
    yi: new Float64Array(n),
    yq: new Float64Array(n),
  };
  const pols: [ComplexArray, 'xi' | 'yi', 'xq' | 'yq', number, number][] = [
    [x, 'xi', 'xq', o.iqGain.x, o.iqPhase.x],
    [y, 'yi', 'yq', o.iqGain.y, o.iqPhase.y],
  ];
  for (const [f, ci, cq, g, phi] of pols) {
    const cosP = Math.cos(phi);
    const sinP = Math.sin(phi);
    const I = ch[ci];
    const Q = ch[cq];
    for (let k = 0; k < n; k++) {
      I[k] = f[2 * k];
      Q[k] = g * (f[2 * k + 1] * cosP + f[2 * k] * sinP);
    }
  }
  for (const name of CHANNEL_NAMES) {
    const skew = o.skewPs[name] * 1e-12;
    if (skew !== 0) delayReal(ch[name], skew, fs);
  }
  const rms: Record<ChannelName, number> = { xi: 0, xq: 0, yi: 0, yq: 0 };
  for (const name of CHANNEL_NAMES) {
    let s = 0;
    for (const v of ch[name]) s += v * v;
    rms[name] = Math.sqrt(s / n);
    const dc = o.dcOffset[name] * rms[name];
    if (dc !== 0) for (let k = 0; k < n; k++) ch[name][k] += dc;
  }
  const clipped: Record<ChannelName, number> = { xi: 0, xq: 0, yi: 0, yq: 0 };
  if (o.adc) {
    const total = Math.sqrt((rms.xi ** 2 + rms.xq ** 2 + rms.yi ** 2 + rms.yq ** 2) / 4);
    const full = total / o.adc.loading;
    const levels = 2 ** o.adc.bits;
    const step = (2 * full) / levels;
    for (const name of CHANNEL_NAMES) {
      const v = ch[name];
      let count = 0;
      for (let k = 0; k < n; k++) {
        // Mid-rise quantizer over ±full scale; codes 0 … levels − 1.
        let code = Math.floor((v[k] + full) / step);
        if (code < 0) {
          code = 0;
          count++;
        } else if (code > levels - 1) {
          code = levels - 1;
          count++;
        }
        v[k] = -full + (code + 0.5) * step;
      }
      clipped[name] = count / n;
    }
  }
  return { channels: ch, clipped };
}

/** Delays a real signal by `delay` seconds with a frequency-domain all-pass (circular). */
function delayReal(v: Float64Array, delay: number, fs: number): void {
  const n = v.length;
  const z = complexArray(n);
  for (let k = 0; k < n; k++) z[2 * k] = v[k];
  const Z = fft(z);
  for (let m = 0; m < n; m++) {
    const mm = m < n / 2 ? m : m - n;
    // The Nyquist bin of an even length has no sign: its delay phase is taken as its real part.
    const f = (mm * fs) / n;
    const a = -2 * Math.PI * f * delay;
    const [re, im] = rotate(Z[2 * m], Z[2 * m + 1], a);
    Z[2 * m] = re;
    Z[2 * m + 1] = im;
  }
  const out = ifft(Z);
  for (let k = 0; k < n; k++) v[k] = out[2 * k];
}

function apply(m: JonesMatrix, xr: number, xi: number, yr: number, yi: number): [number, number, number, number] {
  return [
    m[0] * xr - m[1] * xi + m[2] * yr - m[3] * yi,
    m[0] * xi + m[1] * xr + m[2] * yi + m[3] * yr,
    m[4] * xr - m[5] * xi + m[6] * yr - m[7] * yi,
    m[4] * xi + m[5] * xr + m[6] * yi + m[7] * yr,
  ];
}

function rotate(re: number, im: number, a: number): [number, number] {
  if (a === 0) return [re, im];
  const c = Math.cos(a);
  const s = Math.sin(a);
  return [re * c - im * s, re * s + im * c];
}

function rotateAt(z: Float64Array, n: number, c: number, s: number): void {
  const re = z[2 * n];
  const im = z[2 * n + 1];
  z[2 * n] = re * c - im * s;
  z[2 * n + 1] = re * s + im * c;
}

interface Resolved {
  seed: number;
  modulation: SimulationOptions['modulation'];
  symbols: number;
  symbolRate: number;
  samplesPerSymbol: number;
  rollOff: number;
  source: NonNullable<SimulationOptions['source']>;
  esN0Db: number;
  linewidthHz: number;
  freqOffsetHz: number;
  sop: 'identity' | 'random' | readonly number[];
  dgdPs: number;
  dispersionPsPerNm: number;
  wavelengthM: number;
  iqGain: { x: number; y: number };
  iqPhase: { x: number; y: number };
  skewPs: Record<ChannelName, number>;
  dcOffset: Record<ChannelName, number>;
  adc: { bits: number; loading: number } | null;
  clockOffsetPpm: number;
}

function validate(opt: SimulationOptions): Resolved {
  const fail = (option: string, expected: string, received: unknown): never => {
    throw new OptionError(NAME, option, expected, received);
  };
  const finite = (option: string, v: unknown, def: number): number => {
    if (v === undefined) return def;
    if (typeof v !== 'number' || !Number.isFinite(v)) fail(option, 'a finite number', v);
    return v as number;
  };
  if (!Number.isSafeInteger(opt.seed)) fail('seed', 'a safe integer', opt.seed);
  checkModulation(NAME, 'modulation', opt.modulation);
  if (opt.source?.kind === 'prbs' && constellation(opt.modulation).shaped)
    fail('source.kind', "'random' for a shaped modulation (a PRBS's bits are uniform)", 'prbs');
  if (!Number.isInteger(opt.symbols) || opt.symbols < 16) fail('symbols', 'an integer ≥ 16', opt.symbols);
  if (!(opt.symbolRate > 0) || !Number.isFinite(opt.symbolRate))
    fail('symbolRate', 'a positive symbol rate in Bd', opt.symbolRate);
  const rollOff = finite('rollOff', opt.rollOff, DEFAULT_ROLL_OFF);
  if (!(rollOff > 0 && rollOff <= 1)) fail('rollOff', 'a roll-off in (0, 1]', rollOff);
  const sps = finite('samplesPerSymbol', opt.samplesPerSymbol, 2);
  if (sps < 1 + rollOff) fail('samplesPerSymbol', `at least 1 + roll-off = ${1 + rollOff} (no aliasing)`, sps);
  const source = opt.source ?? { kind: 'random' as const };
  if (source.kind === 'prbs' && !PRBS_PATTERNS[source.order])
    fail('source.order', 'a PRBS order among 7, 9, 11, 15, 20, 23, 29, 31', source.order);
  if (source.kind !== 'prbs' && source.kind !== 'random')
    fail('source.kind', "'random' or 'prbs'", (source as { kind: unknown }).kind);

  const ch = opt.channel ?? {};
  let esN0Db = Number.POSITIVE_INFINITY;
  if (ch.esN0Db !== undefined && ch.osnrDb !== undefined) fail('channel.osnrDb', 'either esN0Db or osnrDb, not both', ch.osnrDb);
  if (ch.esN0Db !== undefined) esN0Db = finite('channel.esN0Db', ch.esN0Db, 0);
  if (ch.osnrDb !== undefined) esN0Db = osnrToSnrDb(finite('channel.osnrDb', ch.osnrDb, 0), { symbolRate: opt.symbolRate });
  const linewidthHz = finite('channel.linewidthHz', ch.linewidthHz, 0);
  if (linewidthHz < 0) fail('channel.linewidthHz', 'a linewidth ≥ 0 Hz', linewidthHz);
  const freqOffsetHz = finite('channel.freqOffsetHz', ch.freqOffsetHz, 0);
  const nominalRate = sps * opt.symbolRate;
  if (Math.abs(freqOffsetHz) >= nominalRate / 2)
    fail('channel.freqOffsetHz', `|offset| below half the sample rate (${nominalRate / 2} Hz)`, freqOffsetHz);
  const sop = ch.sop ?? 'identity';
  if (sop !== 'identity' && sop !== 'random') {
    if (!Array.isArray(sop) || sop.length !== 8 || !sop.every(Number.isFinite)) {
      fail('channel.sop', "'identity', 'random' or 8 finite numbers (a row-major interleaved Jones matrix)", sop);
    }
  }
  const dgdPs = finite('channel.dgdPs', ch.dgdPs, 0);
  if (dgdPs < 0) fail('channel.dgdPs', 'a DGD ≥ 0 ps', dgdPs);
  const dispersionPsPerNm = finite('channel.dispersionPsPerNm', ch.dispersionPsPerNm, 0);
  const wavelengthNm = finite('channel.wavelengthNm', ch.wavelengthNm, 1550);
  if (!(wavelengthNm > 0)) fail('channel.wavelengthNm', 'a positive wavelength in nm', wavelengthNm);

  const rx = opt.receiver ?? {};
  const perPol = (name: string, v: { x?: number; y?: number } | undefined): { x: number; y: number } => ({
    x: finite(`${name}.x`, v?.x, 0),
    y: finite(`${name}.y`, v?.y, 0),
  });
  const g = perPol('receiver.iqGainDb', rx.iqGainDb);
  const p = perPol('receiver.iqPhaseDeg', rx.iqPhaseDeg);
  if (Math.abs(p.x) >= 45 || Math.abs(p.y) >= 45) fail('receiver.iqPhaseDeg', 'a phase error below 45°', rx.iqPhaseDeg);
  const perChannel = (name: string, v: Partial<Record<ChannelName, number>> | undefined): Record<ChannelName, number> => ({
    xi: finite(`${name}.xi`, v?.xi, 0),
    xq: finite(`${name}.xq`, v?.xq, 0),
    yi: finite(`${name}.yi`, v?.yi, 0),
    yq: finite(`${name}.yq`, v?.yq, 0),
  });
  let adc: Resolved['adc'] = null;
  if (rx.adc) {
    const bits = rx.adc.bits;
    if (!Number.isInteger(bits) || bits < 2 || bits > 16) fail('receiver.adc.bits', 'an integer from 2 to 16', bits);
    const loading = finite('receiver.adc.loading', rx.adc.loading, 0.25);
    if (!(loading > 0 && loading < 1)) fail('receiver.adc.loading', 'an rms-to-full-scale ratio in (0, 1)', loading);
    adc = { bits, loading };
  }
  const clockOffsetPpm = finite('receiver.clockOffsetPpm', rx.clockOffsetPpm, 0);
  if (Math.abs(clockOffsetPpm) > 1000) fail('receiver.clockOffsetPpm', 'an offset within ±1000 ppm', clockOffsetPpm);
  const exact = opt.symbols * sps * (1 + clockOffsetPpm * 1e-6);
  const err = Math.abs(Math.round(exact) / exact - 1) * 1e6;
  if (err > 0.01) {
    fail(
      'symbols',
      `a count for which symbols × samplesPerSymbol × (1 + clockOffsetPpm·1e-6) is within 0.01 ppm of an integer (it is ${exact})`,
      opt.symbols,
    );
  }
  return {
    seed: opt.seed,
    modulation: opt.modulation,
    symbols: opt.symbols,
    symbolRate: opt.symbolRate,
    samplesPerSymbol: sps,
    rollOff,
    source,
    esN0Db,
    linewidthHz,
    freqOffsetHz,
    sop,
    dgdPs,
    dispersionPsPerNm,
    wavelengthM: wavelengthNm * 1e-9,
    iqGain: { x: 10 ** (g.x / 20), y: 10 ** (g.y / 20) },
    iqPhase: { x: (p.x * Math.PI) / 180, y: (p.y * Math.PI) / 180 },
    skewPs: perChannel('receiver.skewPs', rx.skewPs),
    dcOffset: perChannel('receiver.dcOffset', rx.dcOffset),
    adc,
    clockOffsetPpm,
  };
}

/**
 * Bits of labels drawn independently from the constellation's prior (the
 * symbols a distribution matcher would give, without its memory): label
 * k is the first whose cumulative probability exceeds a uniform draw.
 * @param out N·log2 M bits, filled MSB first per symbol
 */
function shapedBits(c: Constellation, rng: Rng, out: Uint8Array): void {
  const m = c.bitsPerSymbol;
  const cdf = new Float64Array(c.order);
  let acc = 0;
  for (let k = 0; k < c.order; k++) cdf[k] = acc += c.prior[k];
  for (let s = 0; s < out.length / m; s++) {
    const u = rng.uniform() * acc;
    // Binary search: the least k with cdf[k] > u.
    let lo = 0;
    let hi = c.order - 1;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (cdf[mid] > u) hi = mid;
      else lo = mid + 1;
    }
    for (let b = 0; b < m; b++) out[s * m + b] = (lo >> (m - 1 - b)) & 1;
  }
}
