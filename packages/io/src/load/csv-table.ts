import { InputError, quoteText } from '../errors/input-error.js';
import { decimalEnd, scanDecimalTo } from './decimal.js';
import { textStart } from './encoding.js';

/** A header cell: its name (trimmed, surrounding quotes removed) and its 1-based field and column. */
export interface HeaderCell {
  readonly name: string;
  /** 1-based position among the fields. */
  readonly field: number;
  /** 1-based character column of the cell in the header line. */
  readonly column: number;
}

/**
 * Maps the header to slots: for every field, the index of the slot it fills
 * or −1 to ignore it. It throws an InputError for a missing or duplicate
 * column. `line` is the header's 1-based line number.
 */
export type HeaderResolver = (cells: readonly HeaderCell[], line: number) => Int32Array;

/** A block of rows: one array per slot (length `rows`) and the line number of each row. */
export interface TableBlock {
  readonly slots: readonly Float64Array[];
  readonly lines: Int32Array;
  readonly rows: number;
}

export interface NumericCsvOptions {
  /** Field separator: ',' (default), ';' or a tab. */
  readonly delimiter?: string;
  /** Rows per emitted block (default 65536). */
  readonly blockRows?: number;
}

const NEWLINE = 10;
const RETURN = 13;
const HASH = 35;
const SPACE = 32;
const TAB = 9;
const QUOTE = 34;

const headerDecoder = new TextDecoder('utf-8');
const cellDecoder = new TextDecoder('utf-8');

/** Header cells named in a message: the first eight, each quoted and shortened. */
const LISTED_COLUMNS = 8;

/**
 * The columns of a header for a message: `the columns "a", "b", …` (the
 * first eight, quoted and shortened, so that a binary file's first line
 * stays one short line).
 * @example listColumns([{ name: 'xi', field: 1, column: 1 }]) // 'the columns "xi"'
 */
export function listColumns(cells: readonly HeaderCell[]): string {
  const shown = cells.slice(0, LISTED_COLUMNS).map((c) => quoteText(c.name));
  const more = cells.length > LISTED_COLUMNS ? ` and ${cells.length - LISTED_COLUMNS} more` : '';
  return `the columns ${shown.join(', ')}${more}`;
}

/**
 * Streaming reader of a numeric CSV table: `#` comment lines (anywhere),
 * blank lines skipped, one header row, then rows of numeric cells in the
 * columns the resolver selects (other columns are not parsed, only counted).
 * Lines end with LF or CRLF; a last line without a newline is accepted.
 *
 * The caller feeds bytes with `consume` and receives full blocks through
 * `emit`; `finish` ends the stream. Every problem is an InputError naming
 * the file, the 1-based line and column, what was expected and what was
 * received: a missing header, a row with too few or too many cells, a cell
 * that is not a finite decimal number (NaN and Infinity included), a file
 * with no data row.
 *
 * Memory: one block of `blockRows` rows per slot at a time, and the caller's
 * read buffer.
 */
export class NumericCsvTable {
  private readonly delimiter: number;
  private readonly blockRows: number;
  private line = 0;
  private fieldSlots: Int32Array | null = null;
  private slotCount = 0;
  private totalRows = 0;
  private rows = 0;
  private slots: Float64Array[] = [];
  private lines: Int32Array = new Int32Array(0);
  private headerNames: string[] = [];
  private started = false;
  private readonly spare: { slots: Float64Array[]; lines: Int32Array }[] = [];

  constructor(
    private readonly file: string,
    private readonly resolve: HeaderResolver,
    private readonly emit: (block: TableBlock) => void,
    options: NumericCsvOptions = {},
  ) {
    const d = options.delimiter ?? ',';
    if (d.length !== 1 || d.charCodeAt(0) > 127 || '0123456789.+-eE#" \r\n'.includes(d)) {
      throw new RangeError(
        `NumericCsvTable: delimiter expected one ASCII separator such as ',', ';' or a tab, received ${JSON.stringify(d)}`,
      );
    }
    this.delimiter = d.charCodeAt(0);
    const rows = options.blockRows ?? 65536;
    if (!Number.isInteger(rows) || rows < 1) {
      throw new RangeError(`NumericCsvTable: blockRows expected a positive integer, received ${rows}`);
    }
    this.blockRows = rows;
  }

  /** Names of the header cells (empty before the header is read). */
  get header(): readonly string[] {
    return this.headerNames;
  }

  /** Lines read so far (comments and blanks included). */
  get lineCount(): number {
    return this.line;
  }

  /** Data rows read so far. */
  get rowCount(): number {
    return this.totalRows + this.rows;
  }

  /**
   * Reads the complete lines of `bytes[start, end)`; with `final`, the last
   * line even without a newline. Returns the offset of the first byte not
   * consumed (the start of an incomplete last line), which the caller keeps
   * and passes again, followed by more bytes.
   */
  consume(bytes: Uint8Array, start: number, end: number, final: boolean): number {
    const view = end === bytes.length ? bytes : bytes.subarray(0, end);
    let pos = start;
    if (!this.started) {
      // The first bytes tell a UTF-8 byte-order mark (skipped) from UTF-16 text or a compressed file (refused).
      if (end - start < 8 && !final) return start;
      const head = textStart(view.subarray(start, Math.min(end, start + 256)));
      if ('problem' in head)
        throw new InputError({ file: this.file, line: 1, column: 1 }, 'encoding', 'CSV text in UTF-8', head.problem);
      this.started = true;
      pos += head.skip;
    }
    while (pos < end) {
      let eol = view.indexOf(NEWLINE, pos);
      if (eol < 0) {
        if (!final) return pos;
        eol = end;
      }
      let lineEnd = eol;
      if (lineEnd > pos && view[lineEnd - 1] === RETURN) lineEnd--;
      this.line++;
      if (lineEnd > pos && view[pos] !== HASH) {
        if (this.fieldSlots === null) this.readHeader(view, pos, lineEnd);
        else this.readRow(view, pos, lineEnd);
      }
      pos = eol + 1;
    }
    return end;
  }

  /**
   * Ends the stream: emits the last partial block.
   * @throws InputError for an empty file or a file without data rows
   */
  finish(): void {
    if (this.fieldSlots === null) {
      throw new InputError(
        { file: this.file },
        'header',
        'a header row naming the columns',
        this.line === 0 ? 'an empty file' : `${this.line} line(s) of comments or blanks and no header`,
      );
    }
    if (this.rowCount === 0) {
      throw new InputError({ file: this.file, line: this.line }, 'data', 'at least one data row after the header', 'none');
    }
    if (this.rows > 0) this.flushBlock();
  }

  private readHeader(bytes: Uint8Array, start: number, end: number): void {
    const text = headerDecoder.decode(bytes.subarray(start, end));
    const cells: HeaderCell[] = [];
    const sep = String.fromCharCode(this.delimiter);
    let column = 1;
    text.split(sep).forEach((raw, i) => {
      let name = raw.trim();
      if (name.length >= 2 && name.startsWith('"') && name.endsWith('"')) name = name.slice(1, -1).trim();
      cells.push({ name, field: i + 1, column });
      column += raw.length + 1;
    });
    this.headerNames = cells.map((c) => c.name);
    const slots = this.resolve(cells, this.line);
    let count = 0;
    for (const s of slots) count = Math.max(count, s + 1);
    this.slotCount = count;
    this.fieldSlots = slots;
    this.newBlock();
  }

  private newBlock(): void {
    const reused = this.spare.pop();
    if (reused) {
      this.slots = reused.slots;
      this.lines = reused.lines;
    } else {
      this.slots = [];
      for (let s = 0; s < this.slotCount; s++) this.slots.push(new Float64Array(this.blockRows));
      this.lines = new Int32Array(this.blockRows);
    }
    this.rows = 0;
  }

  /**
   * Gives a block's arrays back to be filled again, for a caller done with it (it copied
   * the values): a reader that recycles allocates nothing per block. A short block (the
   * last, or one cut at the end of a feed) has arrays of its own and is not kept.
   */
  recycle(block: TableBlock): void {
    if (block.rows !== this.blockRows || block.slots.length !== this.slotCount) return;
    this.spare.push({ slots: block.slots as Float64Array[], lines: block.lines });
  }

  private flushBlock(): void {
    const n = this.rows;
    const full = n === this.blockRows;
    const block: TableBlock = {
      slots: full ? this.slots : this.slots.map((s) => s.slice(0, n)),
      lines: full ? this.lines : this.lines.slice(0, n),
      rows: n,
    };
    this.totalRows += n;
    this.newBlock();
    this.emit(block);
  }

  // One data row: split on the delimiter, parse the selected cells in place.
  private readRow(bytes: Uint8Array, start: number, end: number): void {
    const fieldSlots = this.fieldSlots as Int32Array;
    const fields = fieldSlots.length;
    const delimiter = this.delimiter;
    const row = this.rows;
    let field = 0;
    let cell = start;
    for (;;) {
      if (field >= fields) this.raggedRow(start, cell, field + 1 + this.countFields(bytes, cell, end), fields);
      const slot = fieldSlots[field];
      let k: number;
      if (slot >= 0) {
        let a = cell;
        while (a < end && (bytes[a] === SPACE || bytes[a] === TAB)) a++;
        // One pass: the number is read where it starts, then what follows must end the cell.
        const column = this.slots[slot];
        scanDecimalTo(bytes, a, end, column, row);
        const v = column[row];
        k = decimalEnd();
        while (k < end && (bytes[k] === SPACE || bytes[k] === TAB)) k++;
        // NaN is the parser's signal for a bad cell.
        if (Number.isNaN(v) || (k < end && bytes[k] !== delimiter)) this.badCell(bytes, start, a, end, field);
      } else {
        k = cell;
        while (k < end && bytes[k] !== delimiter) k++;
      }
      field++;
      if (k >= end) break;
      cell = k + 1;
    }
    if (field < fields) this.raggedRow(start, end, field, fields);
    this.lines[row] = this.line;
    this.rows = row + 1;
    if (this.rows === this.blockRows) this.flushBlock();
  }

  private countFields(bytes: Uint8Array, from: number, end: number): number {
    let n = 0;
    for (let k = from; k < end; k++) if (bytes[k] === this.delimiter) n++;
    return n;
  }

  private raggedRow(lineStart: number, at: number, received: number, expected: number): never {
    throw new InputError(
      { file: this.file, line: this.line, column: at - lineStart + 1 },
      'row',
      `${expected} cells, as in the header (${this.headerSummary()})`,
      `${received} cell${received === 1 ? '' : 's'}${received < expected ? ' (a short or truncated row)' : ''}`,
    );
  }

  private headerSummary(): string {
    const names = this.headerNames;
    const shown = names.slice(0, LISTED_COLUMNS).join(',');
    return names.length > LISTED_COLUMNS ? `${shown},… ${names.length} columns` : shown;
  }

  private badCell(bytes: Uint8Array, lineStart: number, a: number, end: number, field: number): never {
    let z = a;
    while (z < end && bytes[z] !== this.delimiter) z++;
    while (z > a && (bytes[z - 1] === SPACE || bytes[z - 1] === TAB)) z--;
    const text = cellDecoder.decode(bytes.subarray(a, Math.min(z, a + 164)));
    const name = this.headerNames[field];
    throw new InputError(
      { file: this.file, line: this.line, column: a - lineStart + 1 },
      `column '${name}' (field ${field + 1})`,
      'a finite decimal number',
      a === z ? 'an empty cell' : bytes[a] === QUOTE ? `a quoted cell ${quoteText(text)}` : quoteText(text),
    );
  }
}

/**
 * Feeds a table through one fixed read buffer: the caller reads up to
 * `room` bytes into `buffer` at `offset`, then calls `feed` with the count
 * (0 at the end of the file). An incomplete last line is moved to the
 * buffer's start before the next read, so the buffer bounds the memory and
 * the longest line.
 */
export class BufferFeeder {
  readonly buffer: Uint8Array;
  private kept = 0;

  constructor(
    private readonly table: NumericCsvTable,
    private readonly file: string,
    bufferBytes = 1 << 20,
  ) {
    if (!Number.isInteger(bufferBytes) || bufferBytes < 64) {
      throw new RangeError(`BufferFeeder: bufferBytes expected an integer of at least 64, received ${bufferBytes}`);
    }
    this.buffer = new Uint8Array(bufferBytes);
  }

  /** Where the next read goes. */
  get offset(): number {
    return this.kept;
  }

  /** How many bytes the next read may bring. */
  get room(): number {
    return this.buffer.length - this.kept;
  }

  /**
   * Consumes `n` bytes just read; `n = 0` ends the stream (and calls the table's `finish`).
   * @returns false when the stream has ended
   * @throws InputError from the table, or when a line does not fit in the buffer
   */
  feed(n: number): boolean {
    const end = this.kept + n;
    const used = this.table.consume(this.buffer, 0, end, n === 0);
    if (n === 0) {
      this.table.finish();
      return false;
    }
    this.kept = end - used;
    if (this.kept === this.buffer.length) {
      throw new InputError(
        { file: this.file, line: this.table.lineCount + 1 },
        'line',
        `a line shorter than the read buffer (${this.buffer.length} bytes)`,
        'a longer line',
      );
    }
    this.buffer.copyWithin(0, used, end);
    return true;
  }
}
