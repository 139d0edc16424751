/**
 * Bad input: a file that cannot be read as what it should be. Every loader
 * and validator of this package throws this one class, so a caller (and the
 * command, which exits with code 2) can tell bad input from a bug.
 *
 * The message reads `FILE:LINE:COLUMN: WHAT: expected EXPECTED, received RECEIVED`;
 * the parts that do not apply are left out (a row of an Arrow file has no
 * line; a whole-file problem has no position). When the file was reached
 * through a symbolic link, the message ends with the file it points to, so
 * that quoted content is never taken for the link's own.
 * @example throw new InputError({ file: 'run-07.json', line: 3, column: 17 }, "field 'symbolRate'", 'a positive number of Bd', 'the string "32 GBd"');
 */
export class InputError extends Error {
  /** Always 'InputError'. */
  override readonly name = 'InputError';
  /** The file at fault (as given by the caller). */
  readonly file: string;
  /** 1-based line, when the file is text. */
  readonly line: number | undefined;
  /** 1-based column (characters from the line start), when known. */
  readonly column: number | undefined;
  /** What was being read: a column name, a descriptor field, a row… */
  readonly what: string;
  /** What was expected there, in words. */
  readonly expected: string;
  /** What was found (quoted and shortened). */
  readonly received: string;
  /** The file the path points to, when it is a symbolic link. */
  readonly linkTarget: string | undefined;

  constructor(where: InputLocation, what: string, expected: string, received: string) {
    const pos = [where.file, where.line, where.line !== undefined ? where.column : undefined]
      .filter((p) => p !== undefined)
      .join(':');
    const link = where.linkTarget !== undefined ? ` (${where.file} is a symbolic link to ${where.linkTarget})` : '';
    super(`${pos}: ${what}: expected ${expected}, received ${received}${link}`);
    this.file = where.file;
    this.linkTarget = where.linkTarget;
    this.line = where.line;
    this.column = where.column;
    this.what = what;
    this.expected = expected;
    this.received = received;
  }
}

/** Where in a file a problem sits. */
export interface InputLocation {
  /** The file at fault. */
  readonly file: string;
  /** Line, 1-based. */
  readonly line?: number;
  /** Column, 1-based. */
  readonly column?: number;
  /** The file `file` points to, when it is a symbolic link. */
  readonly linkTarget?: string;
}

/**
 * The same error with the link's target added to its location, for an error
 * about `path` raised while reading it through a symbolic link; any other
 * error is returned as it is.
 * @example try { load(path); } catch (e) { throw withLinkTarget(e, path, '/data/patterns/prbs15.csv'); }
 */
export function withLinkTarget(e: unknown, path: string, target: string | undefined): unknown {
  if (target === undefined || !(e instanceof InputError) || e.file !== path || e.linkTarget !== undefined) return e;
  return new InputError({ file: e.file, line: e.line, column: e.column, linkTarget: target }, e.what, e.expected, e.received);
}

/**
 * A short, printable rendering of a received text: quoted, cut at 40
 * characters, every control character escaped, so that a binary file's
 * bytes never reach the terminal raw.
 * @example quoteText('\u001b[2Jwiped') // '"\\u001b[2Jwiped"'
 */
export function quoteText(text: string): string {
  const chars = Array.from(text);
  const cut = chars.length > 40 ? `${chars.slice(0, 40).join('')}…` : text;
  return printable(JSON.stringify(cut));
}

/**
 * Whether a terminal may act on a character, or it hides itself: C0
 * controls, DEL, the C1 controls (U+0080–U+009F, which include the 8-bit
 * escape sequence introducer), the bidirectional marks and overrides, and
 * the zero-width no-break space (a byte-order mark).
 */
function unprintable(code: number): boolean {
  return (
    code < 0x20 ||
    (code >= 0x7f && code <= 0x9f) ||
    code === 0x200e ||
    code === 0x200f ||
    (code >= 0x202a && code <= 0x202e) ||
    (code >= 0x2066 && code <= 0x2069) ||
    code === 0xfeff
  );
}

/**
 * A message made safe for a terminal: every control character (a file name
 * or a quoted byte may hold an escape sequence) written as \\uXXXX; line
 * breaks kept.
 * @example printable('bad\u001b[2Jname.csv: …') // 'bad\\u001b[2Jname.csv: …'
 */
export function printable(message: string): string {
  let out = '';
  for (const ch of message) {
    const code = ch.charCodeAt(0);
    out += code !== 0x0a && unprintable(code) ? `\\u${code.toString(16).padStart(4, '0')}` : ch;
  }
  return out;
}
