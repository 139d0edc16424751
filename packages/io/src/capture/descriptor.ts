import {
  constellation,
  DEFAULT_ROLL_OFF,
  MODULATIONS,
  type ModulationName,
  parseModulation,
  SHAPED_FAMILIES,
  shapedModulation,
} from '@intradyne/core';
import { InputError, quoteText } from '../errors/input-error.js';
import { UsageError } from '../errors/usage-error.js';
import type { CaptureColumn } from '../load/csv-capture.js';
import { readInputText } from '../load/open-file.js';
import { parseJsonWithPositions, plainJson } from './json-positions.js';
import { LIMITS, maxDispersionPsPerNm, rateProblem } from './limits.js';

/**
 * A capture's descriptor: the sidecar `<capture-name>.json` beside the data
 * file (or, for Arrow captures, fields of the schema metadata).
 *
 * Fields (units in the names' documentation):
 * - `sampleRate` (Sa/s): the scope rate; may be left out when the CSV has a
 *   time column, from which the loader infers it;
 * - `symbolRate` (Bd), required;
 * - `modulation` (case-insensitive), required: `qpsk`, `8qam`, `16qam`,
 *   `32qam`, `64qam`, `128qam`, `256qam`, or a shaped family `ps-64qam` or
 *   `ps-256qam` with a `shaping` field; a shaped name with its parameter
 *   (`ps-64qam:entropy=4.5`, as the analysis writes it) is accepted too;
 * - `shaping`: `{ "entropy": H }` (bits per symbol) or `{ "nu": ν }` (the
 *   Maxwell–Boltzmann parameter over the points at odd integers), with a
 *   shaped family only; when `--modulation` overrides the modulation, the
 *   option names the whole format and this field is ignored;
 * - `reference`: path of the transmitted symbols, relative to the
 *   descriptor's folder, required;
 * - `rollOff`: transmitter root-raised-cosine roll-off in (0, 1], default
 *   {@link DESCRIPTOR_DEFAULTS}.rollOff = 0.1 (the simulator's default);
 * - `dispersionPsPerNm`: accumulated chromatic dispersion, ps/nm; absent
 *   means not known (the receiver estimates it);
 * - `columns`: header names of the CSV columns, e.g. `{ "xi": "CH1" }`;
 * - `notes`: free text;
 * - `simulation`: what `intradyne simulate` records (any value; accepted
 *   and ignored).
 * Any other field is refused, so that a misspelt name does not pass silently.
 * The rates and the dispersion are bounded (see `LIMITS`): the sample rate
 * at most 10 TSa/s and 256 samples per symbol, the dispersion at most what
 * a compensation filter of 2^18 taps removes.
 */
export interface CaptureDescriptor {
  /** Scope sample rate, Sa/s (may be inferred from a time column). */
  readonly sampleRate?: number;
  /** Symbol rate, Bd. */
  readonly symbolRate: number;
  /** The transmitted modulation. */
  readonly modulation: ModulationName;
  /** Path of the reference symbols, relative to the descriptor's folder. */
  readonly reference: string;
  /** Transmitter root-raised-cosine roll-off in (0, 1] (default 0.1). */
  readonly rollOff: number;
  /** Accumulated chromatic dispersion, ps/nm; absent: estimated blindly. */
  readonly dispersionPsPerNm?: number;
  /** Receiver skew per channel from its calibration, ps (each channel is advanced by its value). */
  readonly skewPs?: Partial<Record<'xi' | 'xq' | 'yi' | 'yq', number>>;
  /** Header names of the CSV columns, e.g. `{ xi: 'CH1' }`. */
  readonly columns?: Partial<Record<CaptureColumn, string>>;
  /** Free text. */
  readonly notes?: string;
}

/** Defaults of the optional descriptor fields. */
export const DESCRIPTOR_DEFAULTS = {
  /** Transmitter roll-off (the simulator's default). */
  rollOff: DEFAULT_ROLL_OFF,
} as const;

/** The fields a descriptor may hold. */
export const DESCRIPTOR_FIELDS = [
  'sampleRate',
  'symbolRate',
  'modulation',
  'shaping',
  'reference',
  'rollOff',
  'dispersionPsPerNm',
  'skewPs',
  'columns',
  'notes',
  'simulation',
] as const;

/** A field value with where it was written (line and column when from JSON text, or the option that gave it). */
export interface FieldValue {
  /** The value, as parsed. */
  readonly value: unknown;
  /** 1-based line in the descriptor. */
  readonly line?: number;
  /** 1-based column in the descriptor. */
  readonly column?: number;
  /** The command-line option (or override) that gave the value instead of the file, e.g. '--sample-rate'. */
  readonly option?: string;
}

const COLUMN_KEYS: readonly CaptureColumn[] = ['xi', 'xq', 'yi', 'yq', 't'];

/**
 * Parses and validates a descriptor's JSON text.
 * @param file the descriptor's path, for messages
 * @throws InputError naming the file, the line and column, the field, what was
 *   expected and what was received: a JSON syntax error, a root that is not an
 *   object, a missing required field, a wrong value, an unknown field
 * @example parseDescriptor('{"symbolRate": 32e9, "modulation": "qpsk", "reference": "ref.csv"}', 'run.json')
 */
export function parseDescriptor(text: string, file: string): CaptureDescriptor {
  const root = parseJsonWithPositions(text, file);
  if (root.kind !== 'object') {
    throw new InputError({ file, line: root.line, column: root.column }, 'descriptor', 'a JSON object', `a JSON ${root.kind}`);
  }
  const fields = new Map<string, FieldValue>();
  for (const [k, v] of root.members) fields.set(k, { value: plainJson(v), line: v.line, column: v.column });
  return validateDescriptor(fields, file, { line: root.line, column: root.column });
}

/**
 * Reads a descriptor file.
 * @throws InputError as {@link parseDescriptor}, or when the file cannot be read
 * @example const d = readDescriptor('lab/run-07.json'); d.symbolRate;
 */
export function readDescriptor(path: string): CaptureDescriptor {
  return parseDescriptor(readInputText(path, 'descriptor'), path);
}

function describe(v: unknown): string {
  if (v === undefined) return 'nothing (the field is missing)';
  if (typeof v === 'string') return `the string ${quoteText(v)}`;
  if (typeof v === 'number') return String(v);
  if (Array.isArray(v)) return 'an array';
  if (v === null) return 'null';
  return typeof v === 'object' ? 'an object' : String(v);
}

/**
 * Validates descriptor fields gathered from any source (JSON text, Arrow
 * schema metadata, command-line overrides). `at` locates the whole
 * descriptor for missing fields.
 * @throws InputError as {@link parseDescriptor}; UsageError naming the
 *   option when the bad value came from one (a field with `option` set)
 */
export function validateDescriptor(
  fields: ReadonlyMap<string, FieldValue>,
  file: string,
  at: { line?: number; column?: number } = {},
): CaptureDescriptor {
  const where = (name: string) => {
    const f = fields.get(name);
    return f?.line !== undefined ? { file, line: f.line, column: f.column } : { file, ...at };
  };
  const fail = (name: string, expected: string): never => {
    const f = fields.get(name);
    if (f?.option !== undefined) throw new UsageError(`${f.option}: expected ${expected}, received ${describe(f.value)}`);
    throw new InputError(where(name), `field '${name}'`, expected, describe(f?.value));
  };
  for (const [name, f] of fields) {
    if (!(DESCRIPTOR_FIELDS as readonly string[]).includes(name)) {
      throw new InputError(
        f.line !== undefined ? { file, line: f.line, column: f.column } : { file },
        `field '${name}'`,
        `one of the descriptor fields ${DESCRIPTOR_FIELDS.join(', ')}`,
        'an unknown field',
      );
    }
  }
  const value = (name: string) => fields.get(name)?.value;
  const positive = (name: string, unit: string, required: boolean): number | undefined => {
    const v = value(name);
    if (v === undefined && !required) return undefined;
    if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) fail(name, `a positive number of ${unit}`);
    return v as number;
  };
  const sampleRate = positive('sampleRate', 'Sa/s', false);
  const symbolRate = positive('symbolRate', 'Bd', true) as number;
  if (sampleRate !== undefined && sampleRate > LIMITS.maxSampleRate) fail('sampleRate', `at most ${LIMITS.maxSampleRate} Sa/s`);
  if (symbolRate > LIMITS.maxSampleRate) fail('symbolRate', `at most ${LIMITS.maxSampleRate} Bd`);
  const modulation = descriptorModulation(fields, fail);
  const r = value('reference');
  if (typeof r !== 'string' || r.trim() === '')
    fail('reference', 'the path of the reference symbols (relative to the descriptor)');
  const ro = value('rollOff');
  let rollOff: number = DESCRIPTOR_DEFAULTS.rollOff;
  if (ro !== undefined) {
    if (typeof ro !== 'number' || !(ro > 0 && ro <= 1)) fail('rollOff', 'a roll-off in (0, 1]');
    rollOff = ro as number;
  }
  const d = value('dispersionPsPerNm');
  if (d !== undefined && (typeof d !== 'number' || !Number.isFinite(d))) fail('dispersionPsPerNm', 'a finite number of ps/nm');
  const dMax = maxDispersionPsPerNm(symbolRate);
  if (typeof d === 'number' && Math.abs(d) > dMax)
    fail(
      'dispersionPsPerNm',
      `at most ±${dMax} ps/nm at ${symbolRate} Bd (a compensation filter of at most ${LIMITS.maxDispersionTaps} taps)`,
    );
  const sk = value('skewPs');
  if (sk !== undefined) {
    if (typeof sk !== 'object' || sk === null || Array.isArray(sk))
      fail('skewPs', 'an object such as {"xq": 3.2} (ps per channel)');
    for (const [k, v] of Object.entries(sk as object)) {
      if (!['xi', 'xq', 'yi', 'yq'].includes(k) || typeof v !== 'number' || !Number.isFinite(v) || Math.abs(v) > 1000) {
        throw new InputError(
          where('skewPs'),
          `field 'skewPs'`,
          'keys among xi, xq, yi, yq with skews in ps (finite, within ±1000)',
          `${quoteText(k)}: ${describe(v)}`,
        );
      }
    }
  }
  const c = value('columns');
  let columns: Partial<Record<CaptureColumn, string>> | undefined;
  if (c !== undefined) {
    if (typeof c !== 'object' || c === null || Array.isArray(c)) fail('columns', 'an object such as {"xi": "CH1"}');
    for (const [k, v] of Object.entries(c as object)) {
      if (!(COLUMN_KEYS as readonly string[]).includes(k) || typeof v !== 'string' || v.trim() === '') {
        throw new InputError(
          where('columns'),
          `field 'columns'`,
          `keys among ${COLUMN_KEYS.join(', ')} with column names as strings`,
          `${quoteText(k)}: ${describe(v)}`,
        );
      }
    }
    columns = c as Partial<Record<CaptureColumn, string>>;
    // Two channels read from one column would make a capture no receiver can separate.
    const byName = new Map<string, string>();
    for (const [k, v] of Object.entries(columns)) {
      const first = byName.get((v as string).toLowerCase());
      if (first !== undefined)
        throw new InputError(
          where('columns'),
          "field 'columns'",
          'a different column for each channel (and the time)',
          `${first} and ${k} both mapped to ${quoteText(v as string)}`,
        );
      byName.set((v as string).toLowerCase(), k);
    }
  }
  const n = value('notes');
  if (n !== undefined && typeof n !== 'string') fail('notes', 'a string');
  if (sampleRate !== undefined) {
    const problem = rateProblem(sampleRate, symbolRate);
    // A relation between two fields: blame the symbol rate only when it alone came from the command line.
    if (problem !== null && fields.get('sampleRate')?.option === undefined && fields.get('symbolRate')?.option !== undefined)
      fail(
        'symbolRate',
        `a symbol rate the sample rate of ${file} (${sampleRate} Sa/s) can carry: the sample rate must be ${problem}`,
      );
    if (problem !== null) fail('sampleRate', problem);
  }
  return {
    ...(sampleRate !== undefined ? { sampleRate } : {}),
    symbolRate,
    modulation,
    reference: r as string,
    rollOff,
    ...(d !== undefined ? { dispersionPsPerNm: d as number } : {}),
    ...(sk !== undefined ? { skewPs: sk as Partial<Record<'xi' | 'xq' | 'yi' | 'yq', number>> } : {}),
    ...(columns ? { columns } : {}),
    ...(n !== undefined ? { notes: n as string } : {}),
  };
}

const MODULATION_EXPECTED = `one of ${[...MODULATIONS, ...SHAPED_FAMILIES].map((x) => `"${x}"`).join(', ')} (a shaped family with a "shaping" field), or a shaped name with its parameter such as "ps-64qam:entropy=4.5"`;

/** The modulation of a descriptor's `modulation` and `shaping` fields, as its canonical name. */
function descriptorModulation(
  fields: ReadonlyMap<string, FieldValue>,
  fail: (name: string, expected: string) => never,
): ModulationName {
  const m = fields.get('modulation')?.value;
  const shaping = fields.get('shaping');
  // An option names the whole format: the file's shaping goes with the file's modulation.
  const fromOption = fields.get('modulation')?.option !== undefined;
  if (typeof m !== 'string') return fail('modulation', MODULATION_EXPECTED);
  const name = m.toLowerCase();
  const family = (SHAPED_FAMILIES as readonly string[]).includes(name);
  if (shaping !== undefined && !fromOption && !family)
    fail('shaping', `no shaping for ${quoteText(m)} (only with ${SHAPED_FAMILIES.join(' or ')})`);
  if (family) {
    const sv = fromOption ? undefined : shaping?.value;
    const keys = sv !== null && typeof sv === 'object' && !Array.isArray(sv) ? Object.keys(sv) : [];
    if (keys.length !== 1 || (keys[0] !== 'entropy' && keys[0] !== 'nu'))
      return fail(
        fromOption ? 'modulation' : 'shaping',
        fromOption
          ? `a shaped name with its parameter, such as "${name}:entropy=4.5"`
          : `{"entropy": H} (bits per symbol) or {"nu": ν} for ${name}`,
      );
    const v = (sv as Record<string, unknown>)[keys[0]];
    try {
      if (typeof v !== 'number') throw new RangeError('not a number');
      return shapedModulation(name, keys[0] === 'entropy' ? { entropy: v } : { nu: v });
    } catch (e) {
      if (!(e instanceof RangeError)) throw e;
      const c = constellation(name.slice(3) as ModulationName);
      return fail('shaping', keys[0] === 'entropy' ? `an entropy above 2 and at most ${c.bitsPerSymbol} bits` : 'a finite ν ≥ 0');
    }
  }
  try {
    return parseModulation(name);
  } catch (e) {
    if (!(e instanceof RangeError)) throw e;
    return fail('modulation', MODULATION_EXPECTED);
  }
}
