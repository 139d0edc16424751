import { InputError, type InputLocation } from '../errors/input-error.js';

/**
 * An error carried from a worker thread to the thread that reports it: an
 * InputError with the fields it is made from, any other as its name and message.
 */
export type ThreadError =
  | {
      readonly name: 'InputError';
      readonly where: InputLocation;
      readonly what: string;
      readonly expected: string;
      readonly received: string;
    }
  | { readonly name: string; readonly message: string };

/**
 * An error as a message can carry it (see {@link ThreadError}).
 * @example port.postMessage({ kind: 'error', error: toThreadError(e) });
 */
export function toThreadError(e: unknown): ThreadError {
  if (e instanceof InputError) {
    const where = { file: e.file, line: e.line, column: e.column, linkTarget: e.linkTarget };
    return { name: 'InputError', where, what: e.what, expected: e.expected, received: e.received };
  }
  if (e instanceof Error) return { name: e.name, message: e.message };
  return { name: 'Error', message: String(e) };
}

/**
 * The error again: an InputError with the same file, line, column and message; a
 * RangeError or TypeError as such; any other an Error of the same name and message.
 * @example if (m.kind === 'error') throw fromThreadError(m.error);
 */
export function fromThreadError(e: ThreadError): Error {
  if ('where' in e) return new InputError(e.where, e.what, e.expected, e.received);
  if (e.name === 'RangeError') return new RangeError(e.message);
  if (e.name === 'TypeError') return new TypeError(e.message);
  const out = new Error(e.message);
  out.name = e.name;
  return out;
}
