import type { ResultRow } from '../arrow/arrow-write.js';
import { pipelineFingerprint } from './fingerprint.js';

/**
 * The columns of a sweep's results table, in order. Rates in Bd and Sa/s,
 * frequencies in Hz, SNR and Q in dB, GMI and MI in bits per symbol (both
 * polarizations for the totals, one for the `x_`/`y_` columns), EVM as a
 * fraction. `failure_check` is the failed check ('equalizer', 'reference',
 * 'modulation', 'length'; 'input' for a capture that could not be read;
 * 'error' for an unexpected error) and `failure_reason` why; the figures are
 * empty then. `input_sha256` hashes the capture's files (see
 * `captureInputHash`), `samples_sha256` the samples analysed, and
 * `pipeline_sha256` the library version and chain (see `pipelineFingerprint`).
 */
export const RESULT_COLUMNS = [
  'capture',
  'modulation',
  'symbol_rate_bd',
  'sample_rate_sas',
  'ok',
  'failure_check',
  'failure_reason',
  'ber',
  'ber_ci95_lo',
  'ber_ci95_hi',
  'bit_errors',
  'bits',
  'ser',
  'evm_rms',
  'snr_db',
  'q_db',
  'gmi',
  'ngmi',
  'mi',
  'freq_offset_hz',
  'cycle_slips',
  'implementation_penalty_db',
  'x_ber',
  'x_snr_db',
  'x_gmi',
  'y_ber',
  'y_snr_db',
  'y_gmi',
  'input_sha256',
  'samples_sha256',
  'pipeline_sha256',
] as const;

/** One column name of the results table. */
export type ResultColumn = (typeof RESULT_COLUMNS)[number];

/** The columns that hold text; the others hold numbers (`ok` as 1/0 in Arrow). */
export const TEXT_COLUMNS: ReadonlySet<ResultColumn> = new Set<ResultColumn>([
  'capture',
  'modulation',
  'failure_check',
  'failure_reason',
  'input_sha256',
  'samples_sha256',
  'pipeline_sha256',
]);
/** One row of the results table: a value (or null) per column. */
export type SweepRow = Readonly<Record<ResultColumn, number | string | boolean | null>> & ResultRow;

type Figures = { ber: number | null; snrDb: number | null; gmi: number | null };

const emptyRow = (): Record<ResultColumn, number | string | boolean | null> =>
  Object.fromEntries(RESULT_COLUMNS.map((c) => [c, null])) as Record<ResultColumn, number | string | boolean | null>;

/**
 * A results row from the flat JSON of one analysis (`analysisToJson`).
 * @param key the capture's path relative to the sweep root
 * @param inputSha256 the capture's input hash (null when it could not be read)
 */
export function rowFromAnalysis(key: string, json: Record<string, unknown>, inputSha256: string | null): SweepRow {
  const j = json as Record<string, never> & {
    failure: { check: string; reason: string } | null;
    berCi95: [number | null, number | null] | null;
    perPol: { x: Figures; y: Figures } | null;
    record: { version: string; pipeline: unknown; inputSha256: string };
  };
  const row = emptyRow();
  Object.assign(row, {
    capture: key,
    modulation: j.modulation,
    symbol_rate_bd: j.symbolRate,
    sample_rate_sas: j.sampleRate,
    ok: j.ok,
    failure_check: j.failure?.check ?? null,
    failure_reason: j.failure?.reason ?? null,
    ber: j.ber,
    ber_ci95_lo: j.berCi95?.[0] ?? null,
    ber_ci95_hi: j.berCi95?.[1] ?? null,
    bit_errors: j.bitErrors,
    bits: j.bits,
    ser: j.ser,
    evm_rms: j.evmRms,
    snr_db: j.snrDb,
    q_db: j.qDb,
    gmi: j.gmi,
    ngmi: j.ngmi,
    mi: j.mi,
    freq_offset_hz: j.freqOffsetHz,
    cycle_slips: j.cycleSlips,
    implementation_penalty_db: j.implementationPenaltyDb,
    x_ber: j.perPol?.x.ber ?? null,
    x_snr_db: j.perPol?.x.snrDb ?? null,
    x_gmi: j.perPol?.x.gmi ?? null,
    y_ber: j.perPol?.y.ber ?? null,
    y_snr_db: j.perPol?.y.snrDb ?? null,
    y_gmi: j.perPol?.y.gmi ?? null,
    input_sha256: inputSha256,
    samples_sha256: j.record.inputSha256,
    pipeline_sha256: pipelineFingerprint(j.record.version, j.record.pipeline),
  });
  for (const c of RESULT_COLUMNS) if (row[c] === undefined) row[c] = null;
  return row as SweepRow;
}

/** The row of a capture that could not be analysed: `check` 'input' or 'error', the message as the reason. */
export function rowFromError(key: string, check: 'input' | 'error', reason: string, inputSha256: string | null): SweepRow {
  return {
    ...emptyRow(),
    capture: key,
    ok: false,
    failure_check: check,
    failure_reason: reason,
    input_sha256: inputSha256,
  } as SweepRow;
}
