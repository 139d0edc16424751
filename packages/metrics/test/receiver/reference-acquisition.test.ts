import { type ComplexArray, type DualPol, simulate } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { AcquisitionError, acquireWithReference, MIN_ACQUISITION_PEAK } from '../../src/index.js';

// Placing a shaped capture's reference, and its carrier offset, before any equalizer: the total
// power does not depend on the polarization state (a unitary Jones matrix), and the products of
// the received symbols with the transmitted ones hold the offset as a tone whatever the state
// (data-aided frequency estimation: the periodogram of r·s*, e.g. Rife & Boorstyn, IEEE Trans.
// Inf. Theory 20(5), 1974, for a tone in noise — from memory).
const MOD = 'ps-64qam:entropy=4.5' as const;

function capture(seed: number, freqOffsetHz: number) {
  return simulate({
    seed,
    modulation: MOD,
    symbols: 1 << 16,
    symbolRate: 32e9,
    samplesPerSymbol: 2,
    channel: { sop: 'random', dgdPs: 10, esN0Db: 12.3, linewidthHz: 100e3, freqOffsetHz },
  });
}

const settings = (cap: ReturnType<typeof capture>) => ({
  modulation: MOD,
  symbolRate: 32e9,
  sampleRate: cap.channels.sampleRate,
  dispersionPsPerNm: 0,
});
const blocks = (cap: ReturnType<typeof capture>) => [{ domain: 'channels' as const, ...cap.channels, samplesPerSymbol: 2 }];

/** The reference turned on by `shift` symbols: symbol n of the result is symbol n + shift of the original. */
function shifted(ref: DualPol, shift: number): DualPol {
  const turn = (z: Float64Array) => {
    const n = z.length >> 1;
    const out = new Float64Array(z.length);
    for (let k = 0; k < n; k++) {
      const m = (k + shift) % n;
      out[2 * k] = z[2 * m];
      out[2 * k + 1] = z[2 * m + 1];
    }
    return out;
  };
  return { x: turn(ref.x) as ComplexArray, y: turn(ref.y) as ComplexArray };
}

describe('acquisition against the reference', () => {
  it('finds the offset within 0.5 MHz across ±5 GHz (a periodogram bin of 16,384 symbols is 1.95 MHz)', () => {
    for (const [seed, f] of [
      [71, 1.5e9],
      [72, -4.8e9],
      [73, 0.3e6],
    ] as const) {
      const cap = capture(seed, f);
      const a = acquireWithReference(blocks(cap), settings(cap), cap.reference);
      // 100 kHz lasers wander by √(2π·Δν·T) ≈ 0.6 rad over the 0.5 µs of the span: an apparent
      // frequency some 0.2 MHz off, which the phase recovery follows.
      expect(Math.abs(a.freqOffsetHz - f), `${f}`).toBeLessThan(0.5e6);
      expect(a.peakToRms.x).toBeGreaterThan(4 * MIN_ACQUISITION_PEAK);
      expect(a.peakToRms.y).toBeGreaterThan(4 * MIN_ACQUISITION_PEAK);
    }
  });

  it('moves the delays by exactly the shift of the reference, each polarization its own', () => {
    const cap = capture(74, 1e9);
    const base = acquireWithReference(blocks(cap), settings(cap), cap.reference);
    const nt = cap.reference.x.length >> 1;
    const later = acquireWithReference(blocks(cap), settings(cap), shifted(cap.reference, 1000));
    // Received symbol n carries original symbol n − D, that is shifted symbol n − D − 1000.
    expect(later.delays.x).toBe((base.delays.x + 1000) % nt);
    expect(later.delays.y).toBe((base.delays.y + 1000) % nt);
    // The simulator sends x and y together.
    expect(base.delays.x).toBe(base.delays.y);
  });

  it('says so when the reference is not in the capture, or the capture is too short to tell', () => {
    const cap = capture(75, 1e9);
    const other = capture(76, 1e9);
    expect(() => acquireWithReference(blocks(cap), settings(cap), other.reference)).toThrow(AcquisitionError);
    const c = cap.channels;
    const short = [
      {
        domain: 'channels' as const,
        ...c,
        xi: c.xi.slice(0, 600),
        xq: c.xq.slice(0, 600),
        yi: c.yi.slice(0, 600),
        yq: c.yq.slice(0, 600),
        samplesPerSymbol: 2,
      },
    ];
    expect(() => acquireWithReference(short, settings(cap), cap.reference)).toThrow(/symbols to place the reference on/);
  });

  it('tells a capture with I and Q swapped, and the frequency its field turns at', () => {
    const cap = capture(77, 1.2e9);
    const straight = acquireWithReference(blocks(cap), settings(cap), cap.reference);
    expect(straight.conjugated).toBe(false);
    // Q in place of I: the field xq + j·xi = j·conj(xi + j·xq), which turns the other way.
    const { xi, xq, yi, yq } = cap.channels;
    const swapped = [{ domain: 'channels' as const, ...cap.channels, xi: xq, xq: xi, yi: yq, yq: yi, samplesPerSymbol: 2 }];
    const a = acquireWithReference(swapped, settings(cap), cap.reference);
    expect(a.conjugated).toBe(true);
    expect(Math.abs(a.freqOffsetHz + 1.2e9)).toBeLessThan(0.5e6);
  });
});
