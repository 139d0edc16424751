import type { FileAnalysis } from '../analysis/analyze-file.js';
import {
  ANALYSIS_FIGURES,
  CAPTURE_FIGURES,
  type Figure,
  type FigureKind,
  figureEntries,
  POLARIZATION_FIGURES,
  presentedLinewidth,
  QUALITY_FIGURES,
} from './figure-schema.js';

/**
 * The version of the `analyze --json` object's layout. It changes when a
 * key is removed, renamed or changes meaning; added keys keep it.
 */
export const ANALYSIS_JSON_VERSION = 1;

/**
 * The analysis as one plain JSON object (the `analyze --json` output; its
 * layout is `docs/analysis-json.schema.json`, version
 * {@link ANALYSIS_JSON_VERSION}): the capture and the outcome, the figures
 * at the top level and per polarization, the frequency offset, the slips,
 * the penalty, every stage's diagnostics and the reproducibility record. A
 * failed analysis has the same keys, its figures null. Every figure that is
 * a bound says so beside it: `berIsUpperBound` (no bit error counted: `ber`
 * is the upper end of its 95 % interval) and `qIsLowerBound` (Q from that
 * bound); `linewidthHz` is null with `linewidthBelowResolution` true when
 * the estimate came out at or below zero. `warnings` lists what was noticed
 * without failing.
 * @example console.log(JSON.stringify(analysisToJson(analyzeFile('run-07.csv'))));
 */
export function analysisToJson(analysis: FileAnalysis): Record<string, unknown> {
  const { capture, result } = analysis;
  const m = result.measurement;
  const perPol = (pol: 'x' | 'y') => ({
    ...figureEntries(QUALITY_FIGURES, m ? m.perPol[pol] : null),
    ...figureEntries(POLARIZATION_FIGURES, m ? { analysis, pol } : null),
  });
  return plain({
    schemaVersion: ANALYSIS_JSON_VERSION,
    capture: capture.name,
    dataPath: capture.dataPath,
    ...figureEntries(CAPTURE_FIGURES, analysis),
    equalizerTraining: result.equalizerTraining,
    failure: result.failure,
    warnings: capture.warnings,
    ...figureEntries(QUALITY_FIGURES, m),
    ...figureEntries(ANALYSIS_FIGURES, analysis),
    perPol: { x: perPol('x'), y: perPol('y') },
    sync: m?.sync ?? null,
    slipCorrection: m?.slipCorrection ?? null,
    modulationFit: result.modulationFit,
    slips: { x: result.cycleSlips.x, y: result.cycleSlips.y },
    diagnostics: withPresentedLinewidths(result.diagnostics),
    record: result.record,
  }) as Record<string, unknown>;
}

/** The phase stage's diagnostics with its linewidth estimates presented as {@link presentedLinewidth} does. */
function withPresentedLinewidths(diagnostics: FileAnalysis['result']['diagnostics']) {
  const phase = diagnostics.phase;
  const shown = (v: number) => presentedLinewidth(v).linewidthHz;
  return {
    ...diagnostics,
    phase: {
      ...phase,
      linewidthHz: shown(phase.linewidthHz),
      linewidthPerPolHz: { x: shown(phase.linewidthPerPolHz.x), y: shown(phase.linewidthPerPolHz.y) },
    },
  };
}

/** Typed arrays to arrays, non-finite numbers to null, recursively: JSON-safe. */
function plain(v: unknown): unknown {
  if (typeof v === 'number') return Number.isFinite(v) ? v : null;
  if (ArrayBuffer.isView(v)) return Array.from(v as Float64Array, (x) => (Number.isFinite(x) ? x : null));
  if (Array.isArray(v)) return v.map(plain);
  if (v && typeof v === 'object') {
    const out: Record<string, unknown> = {};
    for (const [k, x] of Object.entries(v)) out[k] = plain(x);
    return out;
  }
  return v;
}

type Schema = Record<string, unknown>;

const nullable = (type: string, description: string): Schema => ({ type: [type, 'null'], description });
const INTERVAL: Schema = { type: 'array', items: { type: 'number' }, minItems: 2, maxItems: 2 };

function kindSchema(kind: FigureKind, description: string): Schema {
  switch (kind) {
    case 'text':
      return nullable('string', description);
    case 'boolean':
      return nullable('boolean', description);
    case 'integer':
      return nullable('integer', description);
    case 'number':
      return nullable('number', description);
    case 'interval':
      return { description, oneOf: [{ type: 'null' }, INTERVAL] };
    case 'counts':
      return {
        description,
        oneOf: [
          { type: 'null' },
          {
            type: 'object',
            additionalProperties: false,
            required: ['ber', 'berCi95', 'berIsUpperBound', 'bitErrors', 'ser', 'serCi95', 'symbolErrors'],
            properties: {
              ber: { type: ['number', 'null'] },
              berCi95: { oneOf: [{ type: 'null' }, INTERVAL] },
              berIsUpperBound: { type: 'boolean' },
              bitErrors: { type: 'integer' },
              ser: { type: ['number', 'null'] },
              serCi95: { oneOf: [{ type: 'null' }, INTERVAL] },
              symbolErrors: { type: 'integer' },
            },
          },
        ],
      };
  }
}

function figureProperties<S>(figures: readonly Figure<S>[]): Record<string, Schema> {
  return Object.fromEntries(
    figures.map((f) => [
      f.key,
      kindSchema(f.kind, f.unit && f.unit !== 'fraction' ? `${f.description} [${f.unit}]` : f.description),
    ]),
  );
}

function objectSchema(properties: Record<string, Schema>, description?: string): Schema {
  return {
    type: 'object',
    ...(description ? { description } : {}),
    additionalProperties: false,
    required: Object.keys(properties),
    properties,
  };
}

/**
 * The JSON Schema (draft 2020-12) of {@link analysisToJson}'s object, made
 * from the same figure lists; `docs/analysis-json.schema.json` is this,
 * written out. The stages' diagnostics, the synchronization and the record
 * are objects described in the API reference of their types.
 * @example new Ajv2020().compile(analysisJsonSchema())(analysisToJson(analyzeFile('run-07.csv'))) // true
 */
export function analysisJsonSchema(): Schema {
  const polarization = objectSchema(
    { ...figureProperties(QUALITY_FIGURES), ...figureProperties(POLARIZATION_FIGURES) },
    'The figures of one received polarization (null figures when the analysis failed)',
  );
  const slipList = {
    type: 'array',
    items: {
      type: 'object',
      required: ['position', 'quadrants'],
      properties: { position: { type: 'integer' }, quadrants: { type: 'integer' } },
    },
  };
  return {
    $schema: 'https://json-schema.org/draft/2020-12/schema',
    $id: `urn:intradyne:analysis-json:${ANALYSIS_JSON_VERSION}`,
    title: `intradyne analyze --json, layout version ${ANALYSIS_JSON_VERSION}`,
    ...objectSchema({
      schemaVersion: { const: ANALYSIS_JSON_VERSION, description: 'The layout version of this object' },
      capture: { type: 'string', description: "The capture's name (its data file's name without the extension)" },
      dataPath: { type: 'string', description: 'The data file analysed' },
      ...figureProperties(CAPTURE_FIGURES),
      equalizerTraining: { enum: ['blind', 'data-aided'], description: 'How the 2×2 equalizer was adapted' },
      failure: {
        description: 'Which check failed and why; null when ok',
        oneOf: [
          { type: 'null' },
          objectSchema({
            check: { enum: ['equalizer', 'reference', 'modulation', 'length'] },
            reason: { type: 'string' },
          }),
        ],
      },
      warnings: { type: 'array', items: { type: 'string' }, description: 'What was noticed without failing' },
      ...figureProperties(QUALITY_FIGURES),
      ...figureProperties(ANALYSIS_FIGURES),
      perPol: objectSchema({ x: polarization, y: polarization }, 'The figures of each received polarization'),
      sync: nullable('object', 'What the synchronization with the reference found (SyncResult); null when failed'),
      slipCorrection: nullable('object', 'How the π/2 ambiguity was resolved along the stream; null when failed'),
      modulationFit: nullable('object', 'The check that the symbols fit the stated modulation; null when not reached'),
      slips: objectSchema(
        { x: slipList, y: slipList },
        "The cycle slips counted in 'cycleSlips', per polarization, in symbol order",
      ),
      diagnostics: { type: 'object', description: "Every stage's diagnostics, by slot of the chain" },
      record: { type: 'object', description: 'Everything needed to run the same analysis again' },
    }),
  };
}
