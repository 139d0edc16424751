import { qFactorDb } from '../quality/snr.js';

/**
 * FEC thresholds: the pre-FEC quality a forward error correction code needs
 * to deliver (near) error-free output. Hard-decision codes are stated in
 * BER; soft-decision codes are better stated in NGMI, which predicts the
 * post-FEC BER of bit-wise soft decoding across modulation formats where a
 * pre-FEC BER does not (Alvarado, Agrell, Lavery, Maher, Bayvel, "Replacing
 * the soft-decision FEC limit paradigm in the design of optical
 * communication systems", JLT 33(20), 2015).
 */
export type FecThreshold =
  | {
      /** Name, for reports. */
      readonly name: string;
      /** Hard decision: passes when the BER is at most `limit`. */
      readonly kind: 'ber';
      /** Largest pre-FEC BER the code corrects. */
      readonly limit: number;
      /** Redundancy of the code, % of the payload. */
      readonly overheadPercent: number;
      /** Where the number comes from. */
      readonly source: string;
    }
  | {
      /** Name, for reports. */
      readonly name: string;
      /** Soft decision: passes when the NGMI is at least `limit`. */
      readonly kind: 'ngmi';
      /** Least NGMI the code needs. */
      readonly limit: number;
      /** Redundancy of the code, % of the payload. */
      readonly overheadPercent: number;
      /** Where the number comes from. */
      readonly source: string;
    };

/**
 * Named presets.
 * - `hd-7`: 7 % hard-decision FEC, BER 3.8e-3 (ITU-T G.975.1, Appendix I.9;
 *   the attribution of this number to it is common practice).
 * - `sd-ideal-20` and `sd-ideal-25`: the information-theoretic limit of a
 *   binary code of rate R = 1/(1 + OH) with bit-wise decoding, NGMI ≥ R
 *   (Alvarado et al., JLT 33(20), 2015: the GMI is the largest achievable
 *   rate of bit-wise decoding). No real code reaches it: use them as bounds,
 *   and {@link fecThreshold} for the NGMI limit of the actual code.
 */
export const FEC_THRESHOLDS = {
  /** 7 % hard-decision FEC: BER ≤ 3.8e-3. */
  'hd-7': {
    /** Name, for reports. */
    name: 'hd-7',
    /** Hard (BER) or soft (NGMI) decision. */
    kind: 'ber',
    /** The limit (BER at most, NGMI at least). */
    limit: 3.8e-3,
    /** Redundancy, % of the payload. */
    overheadPercent: 7,
    /** Where the number comes from. */
    source: 'ITU-T G.975.1 Appendix I.9 (attribution common practice)',
  },
  /** Ideal 20 % soft-decision binary code: NGMI ≥ 1/1.2. */
  'sd-ideal-20': {
    /** Name, for reports. */
    name: 'sd-ideal-20',
    /** Hard (BER) or soft (NGMI) decision. */
    kind: 'ngmi',
    /** The limit (BER at most, NGMI at least). */
    limit: 1 / 1.2,
    /** Redundancy, % of the payload. */
    overheadPercent: 20,
    /** Where the number comes from. */
    source: 'NGMI ≥ code rate 1/1.2 for bit-wise decoding (Alvarado et al., JLT 33(20), 2015)',
  },
  /** Ideal 25 % soft-decision binary code: NGMI ≥ 0.8. */
  'sd-ideal-25': {
    /** Name, for reports. */
    name: 'sd-ideal-25',
    /** Hard (BER) or soft (NGMI) decision. */
    kind: 'ngmi',
    /** The limit (BER at most, NGMI at least). */
    limit: 0.8,
    /** Redundancy, % of the payload. */
    overheadPercent: 25,
    /** Where the number comes from. */
    source: 'NGMI ≥ code rate 0.8 for bit-wise decoding (Alvarado et al., JLT 33(20), 2015)',
  },
} as const satisfies Readonly<Record<string, FecThreshold>>;

/** The name of a preset. */
export type FecPresetName = keyof typeof FEC_THRESHOLDS;

/**
 * A threshold: a preset by name, or a configured one (its limit checked).
 * @throws RangeError for an unknown preset name, a BER limit outside (0, 0.5), an NGMI limit
 *   outside (0, 1), or a negative overhead
 * @example fecThreshold('hd-7').limit // 3.8e-3
 * @example fecThreshold({ name: 'my-sd', kind: 'ngmi', limit: 0.86, overheadPercent: 20, source: 'code data sheet' })
 */
export function fecThreshold(spec: FecPresetName | FecThreshold): FecThreshold {
  if (typeof spec === 'string') {
    const hit = (FEC_THRESHOLDS as Readonly<Record<string, FecThreshold>>)[spec];
    if (!hit) throw new RangeError(`fecThreshold: expected one of ${Object.keys(FEC_THRESHOLDS).join(', ')}, received '${spec}'`);
    return hit;
  }
  if (spec.kind === 'ber' && !(spec.limit > 0 && spec.limit < 0.5)) {
    throw new RangeError(`fecThreshold: expected a BER limit in (0, 0.5), received ${spec.limit}`);
  }
  if (spec.kind === 'ngmi' && !(spec.limit > 0 && spec.limit < 1)) {
    throw new RangeError(`fecThreshold: expected an NGMI limit in (0, 1), received ${spec.limit}`);
  }
  if (spec.kind !== 'ber' && spec.kind !== 'ngmi') {
    throw new RangeError(`fecThreshold: expected kind 'ber' or 'ngmi', received '${String((spec as { kind: unknown }).kind)}'`);
  }
  if (!(spec.overheadPercent >= 0)) {
    throw new RangeError(`fecThreshold: expected an overhead ≥ 0 %, received ${spec.overheadPercent}`);
  }
  return spec;
}

/** How a measurement stands against a threshold. */
export interface FecVerdict {
  /** The threshold judged against. */
  readonly threshold: FecThreshold;
  /**
   * 'pass' or 'fail' when the 95 % interval of the BER lies wholly on one
   * side of a BER limit; 'uncertain' when it straddles it. NGMI limits
   * compare the NGMI estimate directly ('pass' or 'fail').
   */
  readonly verdict: 'pass' | 'fail' | 'uncertain';
  /**
   * Margin, positive when better than the limit: for a BER limit the Q-factor
   * margin Q_dB(BER) − Q_dB(limit) in dB (a lower bound when no error was
   * seen; null when the BER is 0.5 or more); for an NGMI limit, NGMI − limit.
   */
  readonly margin: number | null;
}

/**
 * Compares a measurement with a FEC threshold.
 * @param m the `berCi95`, `qDb` and `ngmi` of a measurement (its totals or one polarization's)
 * @example fecVerdict(measure(rx, ref, 'qpsk'), 'hd-7').verdict
 */
export function fecVerdict(
  m: { readonly berCi95: readonly [number, number]; readonly qDb: number | null; readonly ngmi: number },
  spec: FecPresetName | FecThreshold,
): FecVerdict {
  const threshold = fecThreshold(spec);
  if (threshold.kind === 'ngmi') {
    return { threshold, verdict: m.ngmi >= threshold.limit ? 'pass' : 'fail', margin: m.ngmi - threshold.limit };
  }
  const [lo, hi] = m.berCi95;
  const verdict = hi <= threshold.limit ? 'pass' : lo > threshold.limit ? 'fail' : 'uncertain';
  const margin = m.qDb === null ? null : m.qDb - qFactorDb(threshold.limit);
  return { threshold, verdict, margin };
}
