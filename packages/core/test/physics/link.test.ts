import { describe, expect, it } from 'vitest';
import { dispersionPhase, osnrToSnrDb, snrToOsnrDb } from '../../src/index.js';

describe('link relations', () => {
  it('converts OSNR to SNR: SNR = OSNR − 4.08 dB at 32 GBd dual polarization', () => {
    // Essiambre et al., "Capacity limits of optical fiber networks", JLT 2010:
    // OSNR = (p·Rs/(2·Bref))·SNR with Bref = 12.5 GHz; 10·log10(32/12.5) = 4.0824 dB.
    expect(osnrToSnrDb(20, { symbolRate: 32e9 })).toBeCloseTo(20 - 4.0824, 4);
    expect(snrToOsnrDb(osnrToSnrDb(17.3, { symbolRate: 64e9 }), { symbolRate: 64e9 })).toBeCloseTo(17.3, 12);
    // Single polarization carries half the power: 3.01 dB more SNR for the same OSNR.
    expect(osnrToSnrDb(20, { symbolRate: 32e9, polarizations: 1 }) - osnrToSnrDb(20, { symbolRate: 32e9 })).toBeCloseTo(
      10 * Math.log10(2),
      12,
    );
    expect(() => osnrToSnrDb(20, { symbolRate: 0 })).toThrow(/symbol rate/);
  });

  it('gives the dispersion phase −π·λ²·D·z·f²/c', () => {
    // 17 ps/(nm·km) × 80 km = 1,360 ps/nm (G.652 value, common practice);
    // β2 = −D·λ²/(2πc) and φ = β2·z·ω²/2. DOMAIN.md gives β2 ≈ −21.7 ps²/km
    // for standard fibre at 1550 nm, so β2·z ≈ −1736 ps² over 80 km (to the
    // 3 digits given: ±0.25 %).
    const f = 10e9;
    const beta2z = (-1360e-3 * 1550e-9 ** 2) / (2 * Math.PI * 299792458);
    expect(dispersionPhase(f, 1360)).toBeCloseTo((beta2z * (2 * Math.PI * f) ** 2) / 2, 9);
    expect(Math.abs(beta2z * 1e24 - -21.7 * 80)).toBeLessThan(0.0025 * 1736);
  });
});
