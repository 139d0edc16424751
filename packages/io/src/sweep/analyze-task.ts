import { type AnalysisSettings, analyzeFile } from '../analysis/analyze-file.js';
import { InputError } from '../errors/input-error.js';
import { UsageError } from '../errors/usage-error.js';
import { captureInputHash } from './input-hash.js';
import { rowFromAnalysis, rowFromError, type SweepRow } from './result-row.js';

/** One capture to analyse, as sent to a worker. */
export interface SweepTask {
  /** The capture's path relative to the sweep root: its key in the journal. */
  readonly key: string;
  /** The capture's data file. */
  readonly path: string;
  /** The input hash of the stored row made with the same settings, if any: equal means skip. */
  readonly storedInputSha256: string | null;
}

/** What a worker sends back for a task. */
export type SweepOutcome =
  | {
      /** The stored row stands: the input did not change. */
      readonly kind: 'skipped';
      /** The task's key. */
      readonly key: string;
      /** SHA-256 of the capture's files. */
      readonly inputSha256: string;
    }
  | {
      /** The capture was analysed (or failed to load). */
      readonly kind: 'analysed';
      /** The task's key. */
      readonly key: string;
      /** SHA-256 of the capture's files; null when they could not be read. */
      readonly inputSha256: string | null;
      /** The result row. */
      readonly row: SweepRow;
      /** False for an unexpected error: not stored, so that a re-run tries again. */
      readonly store: boolean;
    };

/**
 * Hashes a capture's files and, unless the hash equals the stored one,
 * analyses it with the default receiver. A bad capture (InputError, or a
 * UsageError for an override that does not fit it) becomes a row with check
 * 'input'; an unexpected error a row with check 'error'. Never throws.
 * @example runSweepTask({ key: 'run-07.csv', path: 'lab/run-07.csv', storedInputSha256: null }, {})
 */
export function runSweepTask(task: SweepTask, settings: AnalysisSettings): SweepOutcome {
  const inputSha256 = captureInputHash(task.path);
  if (inputSha256 !== null && inputSha256 === task.storedInputSha256) return { kind: 'skipped', key: task.key, inputSha256 };
  try {
    const row = rowFromAnalysis(task.key, analyzeFile(task.path, settings), inputSha256);
    return { kind: 'analysed', key: task.key, inputSha256, row, store: true };
  } catch (e) {
    const input = e instanceof InputError || e instanceof UsageError;
    const message = input ? (e as Error).message : `${(e as Error).name}: ${(e as Error).message}`;
    return {
      kind: 'analysed',
      key: task.key,
      inputSha256,
      row: rowFromError(task.key, input ? 'input' : 'error', message, inputSha256),
      store: input && inputSha256 !== null,
    };
  }
}
