import { defaultReceiver, OptionError, type ReceiverSettings } from '@intradyne/core';
import { type AnalyzeOptions, resolveAnalyzeOptions } from '@intradyne/metrics';
import { type PositionedJson, parseJsonWithPositions, plainJson } from '../capture/json-positions.js';
import { InputError } from '../errors/input-error.js';
import { readInputText } from '../load/open-file.js';

/** What a pipeline file holds: receiver settings beyond the descriptor, and the analysis's own. */
export interface PipelineSettings {
  /** Receiver settings: algorithms, expected DGD, stage options… (not the capture's modulation or rates). */
  readonly receiver?: Partial<Omit<ReceiverSettings, 'modulation' | 'symbolRate' | 'sampleRate' | 'replace'>>;
  /** The analysis's settings (symbols left out, tolerance…). */
  readonly analysis?: AnalyzeOptions;
}

/** A key with the keys it may hold (null: any object, its keys checked by the stage it configures). */
type KeyTree = { readonly [key: string]: KeyTree | null | true };

/** The keys a pipeline file may hold; `true` marks a value, `null` a stage's own options. */
const PIPELINE_KEYS: KeyTree = {
  receiver: {
    rollOff: true,
    dispersionPsPerNm: true,
    estimateDispersion: true,
    blindDispersion: null,
    expectedDgdPs: true,
    skewPs: null,
    estimateSkew: true,
    phaseRecovery: true,
    equalizerRule: true,
    orthogonalization: true,
    options: {
      normalize: null,
      orthogonalize: null,
      coarseFrequency: null,
      timing: null,
      equalizer: null,
      frequency: null,
      decisionEqualizer: null,
      phase: null,
    },
  },
  analysis: { skipSymbols: true, skipTailSymbols: true, modulationTolerance: true, fitSymbols: true, equalizerTraining: true },
};

/**
 * Reads a pipeline file: JSON with optional `receiver` (algorithms by name,
 * stage options, `expectedDgdPs`, `blindDispersion`…) and `analysis`
 * (`skipSymbols`, `modulationTolerance`…) objects, checked before any
 * capture is read: every key must be one the settings have, and every
 * value must be one the receiver and the analysis accept (checked by
 * building them once, for a 16QAM capture at 32 GBd and 64 GSa/s, as the
 * stages check their own options). A mistake is named with its file, line
 * and column.
 * @throws InputError naming the file, line and column of unreadable JSON, an unknown key or a wrong value
 * @example const { receiver, analysis } = readPipelineFile('narrow-phase.json');
 */
export function readPipelineFile(path: string): PipelineSettings {
  const doc = parseJsonWithPositions(readInputText(path, 'pipeline'), path);
  checkKeys(doc, PIPELINE_KEYS, '', path);
  const settings = plainJson(doc) as PipelineSettings;
  try {
    resolveAnalyzeOptions(settings.analysis ?? {});
    defaultReceiver({ modulation: '16qam', symbolRate: 32e9, sampleRate: 64e9, ...settings.receiver });
  } catch (e) {
    if (!(e instanceof OptionError)) throw e;
    throw wrongValue(e, doc, path, settingsSlots(settings));
  }
  return settings;
}

/** Stage names to the slots of the chain the settings make (for the position of a stage's option). */
function settingsSlots(settings: PipelineSettings): Map<string, string> {
  const slots = new Map<string, string>();
  try {
    // Stages are built only when every setting of the chain itself is right; a stage's error comes from building them.
    const probe = defaultReceiver({ modulation: '16qam', symbolRate: 32e9, sampleRate: 64e9, ...settings.receiver, options: {} });
    for (const s of probe.describe().stages ?? []) {
      const slot = (s as { slot?: string }).slot;
      if (slot !== undefined) slots.set(s.stage, slot);
    }
  } catch {
    // A setting of the chain itself was wrong: no stage to place.
  }
  return slots;
}

function checkKeys(v: PositionedJson, allowed: KeyTree, path: string, file: string): void {
  const where = path === '' ? 'pipeline' : `key '${path}'`;
  if (v.kind !== 'object') throw new InputError({ file, line: v.line, column: v.column }, where, 'a JSON object', v.kind);
  for (const [key, member] of v.members) {
    const full = path === '' ? key : `${path}.${key}`;
    if (!(key in allowed)) {
      const known = Object.keys(allowed)
        .map((k) => `'${k}'`)
        .join(', ');
      throw new InputError(
        { file, line: member.line, column: member.column },
        `key '${full}'`,
        `one of ${known}`,
        'an unknown key',
      );
    }
    const sub = allowed[key];
    if (sub === null && member.kind !== 'object')
      throw new InputError(
        { file, line: member.line, column: member.column },
        `key '${full}'`,
        'a JSON object of options',
        member.kind,
      );
    if (sub !== null && sub !== true) checkKeys(member, sub, full, file);
  }
}

/** The wrong value's error at its place in the file: the key the option came from, or the nearest one written. */
function wrongValue(e: OptionError, doc: PositionedJson, file: string, slots: Map<string, string>): InputError {
  const path =
    e.stage === 'analyze'
      ? ['analysis', e.option]
      : e.stage === 'default-receiver'
        ? ['receiver', e.option]
        : ['receiver', 'options', slots.get(e.stage) ?? '', ...e.option.split('.')];
  let node = doc;
  const found: string[] = [];
  for (const key of path) {
    if (node.kind !== 'object') break;
    const next = node.members.get(key);
    if (next === undefined) break;
    node = next;
    found.push(key);
  }
  const what = found.length > 0 ? `key '${found.join('.')}'` : 'pipeline';
  const received = typeof e.received === 'string' ? `'${e.received}'` : (JSON.stringify(e.received) ?? String(e.received));
  return new InputError(
    { file, line: node.line, column: node.column },
    what,
    `${e.expected} (${e.stage}: ${e.option})`,
    received,
  );
}
