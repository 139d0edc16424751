import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { describe, expect, it } from 'vitest';
import { analyzeFile, type FileAnalysis } from '../../src/analysis/analyze-file.js';
import { ANALYSIS_JSON_VERSION, analysisJsonSchema, analysisToJson } from '../../src/figures/analysis-json.js';
import { QUALITY_FIGURES } from '../../src/figures/figure-schema.js';
import { columnKind, RESULT_COLUMNS, rowFromAnalysis } from '../../src/sweep/result-row.js';
import { FIXTURES } from '../support/temp.js';

// One description of the figures makes the JSON, its schema and the results table. These tests hold
// the outputs to it: the JSON of a measured and of a failed analysis validate against the committed
// schema (checked by Ajv, a general-purpose JSON Schema validator from the registry), both have the
// same keys, and the table's cells are the JSON's values.

const SCHEMA_FILE = new URL('../../../../docs/analysis-json.schema.json', import.meta.url);
const measured = analyzeFile(join(FIXTURES, 'qpsk-clean.csv'));
// A lead-in longer than the capture: the analysis runs and fails its length check (the lead-in was chosen).
const failed = analyzeFile(join(FIXTURES, 'qpsk-clean.csv'), { analysis: { skipSymbols: 1_000_000 } });

function validator() {
  const ajv = new Ajv2020({ allErrors: true, strict: true });
  return ajv.compile(JSON.parse(readFileSync(SCHEMA_FILE, 'utf8')));
}

/** Objects whose inside is not compared: free-form ones, and figures that are objects when measured and null when not. */
const OPAQUE = [
  'failure',
  'diagnostics',
  'record',
  'sync',
  'slipCorrection',
  'modulationFit',
  ...QUALITY_FIGURES.filter((f) => f.kind === 'counts').map((f) => f.key),
];

/** Every key path of a JSON value down to `depth` levels (arrays and opaque objects not entered). */
function keyPaths(v: unknown, depth: number, prefix = ''): string[] {
  if (depth === 0 || v === null || typeof v !== 'object' || Array.isArray(v)) return [];
  return Object.entries(v as Record<string, unknown>).flatMap(([k, x]) => [
    `${prefix}${k}`,
    ...(OPAQUE.includes(k) ? [] : keyPaths(x, depth - 1, `${prefix}${k}.`)),
  ]);
}

describe('the figure schema', () => {
  it('is written out as docs/analysis-json.schema.json (run `npx -y pnpm@12.4.2 run json-schema` after a change)', () => {
    expect(JSON.parse(readFileSync(SCHEMA_FILE, 'utf8'))).toEqual(analysisJsonSchema());
  });

  it('describes the JSON of a measured analysis and of a failed one, which have the same keys', () => {
    expect(measured.result.ok).toBe(true);
    expect(failed.result.ok).toBe(false);
    expect(failed.result.failure?.check).toBe('length');
    const validate = validator();
    for (const a of [measured, failed]) {
      const json = analysisToJson(a);
      expect(validate(json), JSON.stringify(validate.errors)).toBe(true);
      expect(json.schemaVersion).toBe(ANALYSIS_JSON_VERSION);
    }
    expect(keyPaths(analysisToJson(failed), 3)).toEqual(keyPaths(analysisToJson(measured), 3));
    // The failed analysis's figures are null; what was estimated before the check failed is kept.
    const f = analysisToJson(failed);
    for (const q of QUALITY_FIGURES) expect(f[q.key], q.key).toBeNull();
    expect(typeof f.freqOffsetHz).toBe('number');
  });

  it('rejects a JSON with a key missing, one too many, or a figure of the wrong kind', () => {
    const validate = validator();
    const json = analysisToJson(measured);
    const { ber: _, ...missing } = json;
    expect(validate(missing)).toBe(false);
    expect(validate({ ...json, berPercent: 1 })).toBe(false);
    expect(validate({ ...json, bitErrors: 1.5 })).toBe(false);
    expect(validate({ ...json, perPol: { ...(json.perPol as object), z: {} } })).toBe(false);
  });

  it('gives the results table its columns and their kinds', () => {
    // The table's layout as docs/sweeps.md describes it: changing it changes files users keep.
    expect(RESULT_COLUMNS).toEqual([
      'capture',
      'modulation',
      'symbol_rate_bd',
      'sample_rate_sas',
      'ok',
      'failure_check',
      'failure_reason',
      'warnings',
      'ber',
      'ber_is_upper_bound',
      'ber_ci95_lo',
      'ber_ci95_hi',
      'bit_errors',
      'bits',
      'ser',
      'evm_rms',
      'snr_db',
      'q_db',
      'q_db_is_lower_bound',
      'gmi',
      'ngmi',
      'mi',
      'freq_offset_hz',
      'cycle_slips',
      'implementation_penalty_db',
      'entropy',
      'air_bit_per_s',
      'x_ber',
      'x_ber_is_upper_bound',
      'x_snr_db',
      'x_gmi',
      'y_ber',
      'y_ber_is_upper_bound',
      'y_snr_db',
      'y_gmi',
      'input_sha256',
      'samples_sha256',
      'pipeline_sha256',
    ]);
    const of = (kind: string) => RESULT_COLUMNS.filter((c) => columnKind(c) === kind);
    expect(of('integer')).toEqual(['bit_errors', 'bits', 'cycle_slips']);
    expect(of('boolean')).toEqual([
      'ok',
      'ber_is_upper_bound',
      'q_db_is_lower_bound',
      'x_ber_is_upper_bound',
      'y_ber_is_upper_bound',
    ]);
    expect(() => columnKind('berr')).toThrow(/not a column/);
  });

  it("fills a row with the JSON's values", () => {
    const check = (a: FileAnalysis) => {
      const json = analysisToJson(a) as Record<string, unknown> & {
        berCi95: [number, number] | null;
        perPol: Record<'x' | 'y', Record<string, unknown>>;
      };
      const row = rowFromAnalysis('qpsk-clean.csv', a, null);
      const same: [string, unknown][] = [
        ['ber', json.ber],
        ['ber_is_upper_bound', json.berIsUpperBound],
        ['ber_ci95_lo', json.berCi95?.[0] ?? null],
        ['ber_ci95_hi', json.berCi95?.[1] ?? null],
        ['bit_errors', json.bitErrors],
        ['evm_rms', json.evmRms],
        ['q_db_is_lower_bound', json.qIsLowerBound],
        ['freq_offset_hz', json.freqOffsetHz],
        ['cycle_slips', json.cycleSlips],
        ['implementation_penalty_db', json.implementationPenaltyDb],
        ['x_snr_db', json.perPol.x.snrDb],
        ['y_gmi', json.perPol.y.gmi],
        ['samples_sha256', (json.record as { inputSha256: string }).inputSha256],
      ];
      for (const [column, value] of same) expect(row[column], column).toEqual(value);
    };
    check(measured);
    check(failed);
    expect(typeof rowFromAnalysis('a', measured, null).ber).toBe('number');
  });
});
