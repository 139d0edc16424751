import type { ModulationName } from '../modulation/constellation.js';
import type { PrbsOrder } from '../prbs/prbs.js';
import type { ChannelName } from '../signal/dual-pol.js';

/** Where the transmitted bits come from. */
export type BitSource =
  | {
      /** Seeded random bits. */
      readonly kind: 'random';
    }
  | {
      /** An ITU-T O.150 PRBS: x takes its first bits, y continues the same sequence. */
      readonly kind: 'prbs';
      /** Its degree n. */
      readonly order: PrbsOrder;
    };

/** Per-polarization values. */
export interface PerPol<T> {
  /** For the x polarization. */
  readonly x?: T;
  /** For the y polarization. */
  readonly y?: T;
}

/**
 * The optical link between transmitter and receiver.
 *
 * Order of effects: chromatic dispersion, then polarization (first-order PMD
 * between random principal states, then the SOP rotation), then the carrier
 * (frequency offset and laser phase noise of transmitter and local
 * oscillator together), then ASE noise.
 */
export interface ChannelOptions {
  /**
   * Es/N0 per polarization, dB, defined at the symbol instants after an
   * ideal root-raised-cosine matched filter (unit-power symbols). Omit both
   * this and `osnrDb` for a noiseless link.
   */
  readonly esN0Db?: number;
  /** OSNR in 0.1 nm (12.5 GHz), dB, both polarizations; converted to Es/N0 (exclusive with `esN0Db`). */
  readonly osnrDb?: number;
  /** Combined linewidth of transmitter and local oscillator, Hz (default 0). */
  readonly linewidthHz?: number;
  /** Carrier offset from the local oscillator, Hz: x rotates as exp(+j2π·f·t) (default 0). */
  readonly freqOffsetHz?: number;
  /** 'identity' (default), 'random' (Haar-random principal states and rotation), or a given Jones matrix (8 numbers, row-major interleaved). */
  readonly sop?: 'identity' | 'random' | readonly number[];
  /** Differential group delay between the principal states, ps (default 0). */
  readonly dgdPs?: number;
  /** Accumulated chromatic dispersion D·z, ps/nm (default 0). */
  readonly dispersionPsPerNm?: number;
  /** Carrier wavelength, nm (default 1550). */
  readonly wavelengthNm?: number;
}

/** The coherent receiver's front end and the scope. */
export interface ReceiverOptions {
  /** Gain of Q relative to I per polarization, dB (default 0). */
  readonly iqGainDb?: PerPol<number>;
  /** Departure of the Q axis from 90° per polarization, degrees (default 0): Q' = g·(Q·cos φ + I·sin φ). */
  readonly iqPhaseDeg?: PerPol<number>;
  /** Delay of each channel, ps (default 0). */
  readonly skewPs?: Partial<Readonly<Record<ChannelName, number>>>;
  /** DC offset added to each channel, in units of the channel's rms (default 0). */
  readonly dcOffset?: Partial<Readonly<Record<ChannelName, number>>>;
  /**
   * Scope ADC: `bits` of resolution over ±full scale, with full scale set so
   * that the rms of the four channels is `loading` × full scale (default
   * 0.25). Samples beyond full scale clip. Omit for unquantized output.
   */
  readonly adc?: {
    /** Resolution, bits. */
    readonly bits: number;
    /** rms of the channels as a fraction of full scale (default 0.25). */
    readonly loading?: number;
  };
  /**
   * Scope sampling-clock offset, ppm (default 0): the capture holds
   * N·sps·(1 + ppm·1e-6) samples for N symbols while its nominal sample rate
   * stays sps·Rs. N·sps·(1 + ppm·1e-6) must be within 0.01 ppm of an integer.
   */
  readonly clockOffsetPpm?: number;
}

/** Everything the simulator needs; only the first four fields are required. */
export interface SimulationOptions {
  /** Seed of every random draw: same seed, same capture. */
  readonly seed: number;
  /** The transmitted modulation. */
  readonly modulation: ModulationName;
  /** Symbols per polarization (≥ 16). */
  readonly symbols: number;
  /** Symbol rate, Bd. */
  readonly symbolRate: number;
  /** Nominal scope samples per symbol (default 2; non-integer allowed, at least 1 + roll-off). */
  readonly samplesPerSymbol?: number;
  /** Transmitter root-raised-cosine roll-off (default 0.1). */
  readonly rollOff?: number;
  /** Bit source (default random). */
  readonly source?: BitSource;
  /** The optical link (default: noiseless, no impairment). */
  readonly channel?: ChannelOptions;
  /** The receiver front end and the scope (default: ideal). */
  readonly receiver?: ReceiverOptions;
}
