import type { DualPol, ScopeChannels } from '@intradyne/core';
import { type AtomicWriteOptions, type StagedFile, stageFile } from './atomic.js';

/** Lines per write call: large enough to amortize system calls, small enough to bound memory. */
const LINES_PER_CHUNK = 8192;

/** Shortest text that reads back as the same float64. */
function num(v: number): string {
  return Object.is(v, -0) ? '0' : String(v);
}

/** Options of {@link writeCaptureCsv}. */
export interface CaptureCsvOptions extends AtomicWriteOptions {
  /** Comment lines written first, each prefixed with '# '. */
  readonly comments?: readonly string[];
  /** Also write a time column `t` in seconds (from the sample rate). */
  readonly timeColumn?: boolean;
}

/**
 * Writes a four-channel capture as CSV: optional `#` comment lines, a header
 * row `xi,xq,yi,yq` (preceded by `t` with `timeColumn`), one row per sample.
 * Atomic (temporary file, then rename).
 * @example writeCaptureCsv('run-07.csv', sim.channels, { comments: ['bench 3'], timeColumn: true });
 */
export function writeCaptureCsv(path: string, channels: ScopeChannels, options: CaptureCsvOptions = {}): void {
  stageCaptureCsv(path, channels, options).commit();
}

/**
 * {@link writeCaptureCsv} staged (see `stageFile`), for a caller that writes several files all or none.
 * @example stageCaptureCsv('run-07.csv', sim.channels).commit();
 */
export function stageCaptureCsv(path: string, channels: ScopeChannels, options: CaptureCsvOptions = {}): StagedFile {
  const { xi, xq, yi, yq, sampleRate } = channels;
  return stageFile(
    path,
    (append) => {
      for (const c of options.comments ?? []) append(`# ${c}\n`);
      append(options.timeColumn ? 't,xi,xq,yi,yq\n' : 'xi,xq,yi,yq\n');
      let lines: string[] = [];
      for (let n = 0; n < xi.length; n++) {
        const row = `${num(xi[n])},${num(xq[n])},${num(yi[n])},${num(yq[n])}`;
        lines.push(options.timeColumn ? `${num(n / sampleRate)},${row}` : row);
        if (lines.length === LINES_PER_CHUNK) {
          append(`${lines.join('\n')}\n`);
          lines = [];
        }
      }
      if (lines.length > 0) append(`${lines.join('\n')}\n`);
    },
    options,
  );
}

/**
 * Writes reference symbols as CSV with header `x_re,x_im,y_re,y_im`, one row
 * per transmitted symbol. Atomic.
 * @example writeReferenceCsv('run-07-reference.csv', sim.reference);
 */
export function writeReferenceCsv(path: string, symbols: DualPol, options: CaptureCsvOptions = {}): void {
  stageReferenceCsv(path, symbols, options).commit();
}

/**
 * {@link writeReferenceCsv} staged (see `stageFile`), for a caller that writes several files all or none.
 * @example stageReferenceCsv('run-07-reference.csv', sim.reference).commit();
 */
export function stageReferenceCsv(path: string, symbols: DualPol, options: CaptureCsvOptions = {}): StagedFile {
  const { x, y } = symbols;
  return stageFile(
    path,
    (append) => {
      for (const c of options.comments ?? []) append(`# ${c}\n`);
      append('x_re,x_im,y_re,y_im\n');
      let lines: string[] = [];
      const n = x.length >> 1;
      for (let k = 0; k < n; k++) {
        lines.push(`${num(x[2 * k])},${num(x[2 * k + 1])},${num(y[2 * k])},${num(y[2 * k + 1])}`);
        if (lines.length === LINES_PER_CHUNK) {
          append(`${lines.join('\n')}\n`);
          lines = [];
        }
      }
      if (lines.length > 0) append(`${lines.join('\n')}\n`);
    },
    options,
  );
}

/**
 * Writes a JSON document (2-space indented) atomically.
 * @example writeJsonAtomic('run-07.json', { sampleRate: 64e9, symbolRate: 32e9, modulation: 'qpsk', reference: 'run-07-reference.csv' });
 */
export function writeJsonAtomic(path: string, value: unknown, options: AtomicWriteOptions = {}): void {
  stageJson(path, value, options).commit();
}

/**
 * {@link writeJsonAtomic} staged (see `stageFile`), for a caller that writes several files all or none.
 * @example stageJson('run-07.json', descriptor).commit();
 */
export function stageJson(path: string, value: unknown, options: AtomicWriteOptions = {}): StagedFile {
  const text = `${JSON.stringify(value, null, 2)}\n`;
  return stageFile(path, (append) => append(text), options);
}
