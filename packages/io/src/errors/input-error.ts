/**
 * Bad input: a file that cannot be read as what it should be. Every loader
 * and validator of this package throws this one class, so a caller (and the
 * command, which exits with code 2) can tell bad input from a bug.
 *
 * The message reads `FILE:LINE:COLUMN: WHAT: expected EXPECTED, received RECEIVED`;
 * the parts that do not apply are left out (a row of an Arrow file has no
 * line; a whole-file problem has no position).
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

  constructor(where: InputLocation, what: string, expected: string, received: string) {
    const pos = [where.file, where.line, where.line !== undefined ? where.column : undefined]
      .filter((p) => p !== undefined)
      .join(':');
    super(`${pos}: ${what}: expected ${expected}, received ${received}`);
    this.file = where.file;
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
}

/** A short, printable rendering of a received text (quoted, cut at 40 characters). */
export function quoteText(text: string): string {
  const cut = text.length > 40 ? `${text.slice(0, 40)}…` : text;
  return JSON.stringify(cut);
}
