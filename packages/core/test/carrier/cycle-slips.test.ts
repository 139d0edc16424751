import { describe, expect, it } from 'vitest';
import {
  blindPhaseSearch,
  type ComplexArray,
  constellation,
  cycleSlipsAgainstReference,
  cycleSlipsFromPhase,
  differentialQuadrantDecoder,
  differentialQuadrantEncode,
  quadrantOf,
  Rng,
  viterbiViterbi,
} from '../../src/index.js';
import { carrierSignal, countBitErrors, qam16Ber, RS, runSymbols, snrForBer } from '../support/carrier-signals.js';

/** Multiplies symbols k ≥ from by j^q: a sudden carrier jump the fourth power cannot see. */
function quarterTurnFrom(z: ComplexArray, from: number, q: number): void {
  const c = Math.round(Math.cos((q * Math.PI) / 2));
  const s = Math.round(Math.sin((q * Math.PI) / 2));
  for (let k = from; k < z.length >> 1; k++) {
    const re = z[2 * k];
    const im = z[2 * k + 1];
    z[2 * k] = re * c - im * s;
    z[2 * k + 1] = re * s + im * c;
  }
}

describe('cycle slips against the reference', () => {
  it('finds a quarter-turn jump of the carrier at its position, with its sign', () => {
    // The carrier jumps by +π/2 at symbol 20000: the fourth-power estimate
    // cannot see it, so the recovered phase is π/2 behind the truth from
    // there on — a slip of −1 quarter turn. A second jump, −π, at 40000.
    const s = carrierSignal({ seed: 61, modulation: 'qpsk', symbols: 60000, esN0Db: 14, linewidthHz: 100e3 });
    for (const z of [s.x, s.y]) {
      quarterTurnFrom(z, 20000, 1);
      quarterTurnFrom(z, 40000, -2);
    }
    const stage = viterbiViterbi({ modulation: 'qpsk', reference: { x: s.refX, y: s.refY } });
    runSymbols(stage, s.x, s.y);
    const slips = stage.diagnostics().cycleSlips;
    expect(slips.method).toBe('reference');
    expect(slips.count).toBe(4);
    for (const pol of [slips.x, slips.y]) {
      expect(pol.map((e) => e.quadrants)).toEqual([-1, 2]);
      // At 14 dB the split of the 64-symbol window is exact or within a symbol or two.
      expect(Math.abs(pol[0].position - 20000)).toBeLessThanOrEqual(2);
      expect(Math.abs(pol[1].position - 40000)).toBeLessThanOrEqual(2);
    }
  });

  it('finds them against pilots every 16 symbols too', () => {
    const s = carrierSignal({ seed: 63, modulation: 'qpsk', symbols: 60000, esN0Db: 14, linewidthHz: 100e3 });
    for (const z of [s.x, s.y]) {
      quarterTurnFrom(z, 20000, 1);
      quarterTurnFrom(z, 40000, -2);
    }
    // The pilots: every 16th sent symbol.
    const pilots = (a: ComplexArray) => {
      const p = new Float64Array(2 * 3750) as ComplexArray;
      for (let m = 0; m < 3750; m++) p.set(a.subarray(32 * m, 32 * m + 2), 2 * m);
      return p;
    };
    const stage = viterbiViterbi({ modulation: 'qpsk', reference: { x: pilots(s.refX), y: pilots(s.refY) }, pilotPeriod: 16 });
    const out = runSymbols(stage, s.x, s.y);
    const slips = stage.diagnostics().cycleSlips;
    for (const pol of [slips.x, slips.y]) {
      expect(pol.map((e) => e.quadrants)).toEqual([-1, 2]);
      // Both jumps fall on a pilot: the first pilot after each is the jump itself, give or take one pilot.
      expect(Math.abs(pol[0].position - 20000)).toBeLessThanOrEqual(16);
      expect(Math.abs(pol[1].position - 40000)).toBeLessThanOrEqual(16);
    }
    expect(cycleSlipsAgainstReference(out.x, pilots(s.refX), { pilotPeriod: 16 })).toEqual(slips.x);
    expect(() => viterbiViterbi({ modulation: 'qpsk', pilotPeriod: 16 })).toThrow(/pilotPeriod/);
  });

  it('reports none on a clean run, and works as a function', () => {
    const s = carrierSignal({ seed: 62, modulation: 'qpsk', symbols: 20000, esN0Db: 14, linewidthHz: 100e3 });
    const out = runSymbols(viterbiViterbi({ modulation: 'qpsk' }), s.x, s.y);
    expect(cycleSlipsAgainstReference(out.x, s.refX)).toEqual([]);
    quarterTurnFrom(out.x, 12345, -1);
    expect(cycleSlipsAgainstReference(out.x, s.refX)).toEqual([{ position: 12345, quadrants: 1 }]);
    expect(() => cycleSlipsAgainstReference(out.x, new Float64Array(0) as ComplexArray)).toThrow(RangeError);
  });
});

describe('cycle slips by phase-jump statistics', () => {
  it('finds steps of ±π/2 and π in a noisy phase track, and nothing without them', () => {
    // A track like a recovered one: Wiener phase noise of 1 MHz at 32 GBd
    // (increment variance 2π·Δν·T) plus 0.1 rad rms of white estimation
    // noise, with steps at known places.
    const n = 30000;
    const rng = new Rng(71);
    const sigma = Math.sqrt((2 * Math.PI * 1e6) / RS);
    const clean = new Float64Array(n);
    let walk = 0;
    for (let k = 0; k < n; k++) {
      walk += sigma * rng.gaussian();
      clean[k] = walk + 0.1 * rng.gaussian();
    }
    expect(cycleSlipsFromPhase(clean)).toEqual([]);
    const steps = [
      { position: 5000, quadrants: 1 },
      { position: 12000, quadrants: -1 },
      { position: 20000, quadrants: 2 },
    ];
    const track = clean.slice();
    for (const st of steps) for (let k = st.position; k < n; k++) track[k] += (st.quadrants * Math.PI) / 2;
    const found = cycleSlipsFromPhase(track);
    expect(found.map((f) => f.quadrants)).toEqual([1, -1, 2]);
    // Position within 2 symbols: the mean of 32 samples has 0.018 rad of noise against a step of π/2.
    for (const [i, f] of found.entries()) expect(Math.abs(f.position - steps[i].position)).toBeLessThanOrEqual(2);
    expect(() => cycleSlipsFromPhase(track, { threshold: 2 })).toThrow(RangeError);
  });

  it('sees, without a reference, the slips the reference sees on a slip-prone run', () => {
    // 16QAM at the 1e-3 SNR (Cho & Yoon) with Δν·Ts = 3e-4 and a short
    // window (N = 6): blind phase search slips now and then. The recovered
    // track then steps by ±π/2; the phase-jump detector must flag each slip
    // the reference finds, near the same place (within the detector's
    // 32-symbol half window plus the reference's 64-symbol window).
    const snr = snrForBer(qam16Ber, 1e-3);
    const s = carrierSignal({ seed: 1, modulation: '16qam', symbols: 1 << 15, esN0Db: snr, linewidthHz: 3e-4 * RS });
    const withRef = blindPhaseSearch({ modulation: '16qam', halfWindow: 6, reference: { x: s.refX, y: s.refY } });
    const blind = blindPhaseSearch({ modulation: '16qam', halfWindow: 6 });
    runSymbols(withRef, s.x, s.y);
    runSymbols(blind, s.x, s.y);
    const a = withRef.diagnostics().cycleSlips;
    const b = blind.diagnostics().cycleSlips;
    expect(b.method).toBe('phase-jump');
    expect(a.count).toBeGreaterThan(0);
    for (const pol of ['x', 'y'] as const) {
      for (const slip of a[pol]) {
        const near = b[pol].find((j) => Math.abs(j.position - slip.position) <= 96 && j.quadrants === slip.quadrants);
        expect(near, `slip ${JSON.stringify(slip)} on ${pol}`).toBeDefined();
      }
    }
  });
});

describe('differential decoding of the quadrant (Taylor, JLT 27(7), 2009)', () => {
  it('inverts the encoding and leaves the quadrant as the data increment', () => {
    const c = constellation('16qam');
    const data = new Float64Array(2 * 500) as ComplexArray;
    const rng = new Rng(81);
    for (let k = 0; k < 500; k++) {
      const label = rng.integer(16);
      data[2 * k] = c.points[2 * label];
      data[2 * k + 1] = c.points[2 * label + 1];
    }
    const sent = differentialQuadrantEncode(data);
    let q = 0;
    for (let k = 0; k < 500; k++) {
      const qa = quadrantOf(data[2 * k], data[2 * k + 1]);
      const qs = quadrantOf(sent[2 * k], sent[2 * k + 1]);
      expect(qs).toBe((q + qa) % 4);
      q = qs;
    }
    const dec = differentialQuadrantDecoder();
    const out = dec.process({ domain: 'symbols', x: sent, y: sent, sampleRate: RS, samplesPerSymbol: 1 });
    expect(Array.from(out.x)).toEqual(Array.from(data));
  });

  it('turns a cycle slip into a single symbol error', () => {
    // The simulator sends aₖ; the noise is circularly symmetric, so turning
    // the received symbols by the encoder's j^(Qₖ₋₁) is the same, in
    // distribution, as sending the differentially encoded sₖ = aₖ·j^(Qₖ₋₁).
    const n = 40000;
    const s = carrierSignal({ seed: 91, modulation: 'qpsk', symbols: n, esN0Db: 14, linewidthHz: 100e3 });
    const sentX = differentialQuadrantEncode(s.refX);
    const sentY = differentialQuadrantEncode(s.refY);
    for (const [z, a, sent] of [
      [s.x, s.refX, sentX],
      [s.y, s.refY, sentY],
    ] as const) {
      for (let k = 0; k < n; k++) {
        // j^(Qₖ₋₁) = sₖ / aₖ (unit-modulus ratio of two QPSK points).
        const m = a[2 * k] ** 2 + a[2 * k + 1] ** 2;
        const tr = (sent[2 * k] * a[2 * k] + sent[2 * k + 1] * a[2 * k + 1]) / m;
        const ti = (sent[2 * k + 1] * a[2 * k] - sent[2 * k] * a[2 * k + 1]) / m;
        const re = z[2 * k];
        const im = z[2 * k + 1];
        z[2 * k] = re * tr - im * ti;
        z[2 * k + 1] = re * ti + im * tr;
      }
      quarterTurnFrom(z, 25000, 1);
    }
    const c = constellation('qpsk');
    const cpr = runSymbols(viterbiViterbi({ modulation: 'qpsk' }), s.x, s.y);
    // Without decoding, the slip spoils the 15000 symbols after it: on the
    // order of 15000 bit errors against the encoded symbols.
    expect(countBitErrors(c, cpr.x, sentX).errors).toBeGreaterThan(10000);
    const dec = runSymbols(differentialQuadrantDecoder(), cpr.x, cpr.y);
    // With decoding, errors are about twice the coherent count (BER ≈ 2·½erfc(√(SNR/2)) ≈ 2.5e-5
    // at 14 dB, 2 expected over 80000 bits) plus the slip's one symbol: a handful.
    const e = countBitErrors(c, dec.x, s.refX);
    expect(e.errors).toBeLessThan(20);
  });
});
