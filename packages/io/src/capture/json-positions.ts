import { InputError, quoteText } from '../errors/input-error.js';

/** A JSON value with the 1-based line and column where it starts. */
export type PositionedJson =
  | {
      /** 'null'. */
      readonly kind: 'null';
      /** Line, 1-based. */
      readonly line: number;
      /** Column, 1-based. */
      readonly column: number;
      /** The value. */
      readonly value: null;
    }
  | {
      /** 'boolean'. */
      readonly kind: 'boolean';
      /** Line, 1-based. */
      readonly line: number;
      /** Column, 1-based. */
      readonly column: number;
      /** The value. */
      readonly value: boolean;
    }
  | {
      /** 'number'. */
      readonly kind: 'number';
      /** Line, 1-based. */
      readonly line: number;
      /** Column, 1-based. */
      readonly column: number;
      /** The value. */
      readonly value: number;
    }
  | {
      /** 'string'. */
      readonly kind: 'string';
      /** Line, 1-based. */
      readonly line: number;
      /** Column, 1-based. */
      readonly column: number;
      /** The value, unescaped. */
      readonly value: string;
    }
  | {
      /** 'array'. */
      readonly kind: 'array';
      /** Line, 1-based. */
      readonly line: number;
      /** Column, 1-based. */
      readonly column: number;
      /** The elements in order. */
      readonly items: readonly PositionedJson[];
    }
  | {
      /** 'object'. */
      readonly kind: 'object';
      /** Line, 1-based. */
      readonly line: number;
      /** Column, 1-based. */
      readonly column: number;
      /** Members in order; a repeated key is an error. */
      readonly members: ReadonlyMap<string, PositionedJson>;
    };

/** Nesting beyond this depth is refused (a guard against stack exhaustion on hostile input). */
const MAX_DEPTH = 64;

/**
 * Parses JSON text (RFC 8259) keeping the position of every value, so that a
 * validator can name the line and column of a wrong field. Syntax errors are
 * InputErrors naming the line and column (JSON.parse gives neither in every
 * engine). Repeated keys in one object are refused.
 * @throws InputError for a syntax error, a repeated key or nesting deeper than 64
 * @example parseJsonWithPositions('{"a": 1}', 'x.json') // an object whose member a is at line 1, column 7
 */
export function parseJsonWithPositions(text: string, file: string): PositionedJson {
  const p = new JsonReader(text, file);
  p.space();
  const v = p.value(0);
  p.space();
  if (p.at < text.length) p.fail('the end of the document', `more text ${quoteText(text.slice(p.at, p.at + 20))}`);
  return v;
}

/**
 * Parses a JSON document read from a file, as `JSON.parse` does, but with
 * the guards and messages of {@link parseJsonWithPositions}: a syntax error
 * names the line and column in one short line (JSON.parse quotes the text
 * around it, line breaks included), deep nesting is refused.
 * @throws InputError naming the file, line and column
 * @example parseJsonFile('{"receiver": {}}', 'pipeline.json') // { receiver: {} }
 */
export function parseJsonFile(text: string, file: string): unknown {
  return plainJson(parseJsonWithPositions(text, file));
}

/** Converts a positioned value back to plain JSON. */
export function plainJson(v: PositionedJson): unknown {
  switch (v.kind) {
    case 'array':
      return v.items.map(plainJson);
    case 'object':
      return Object.fromEntries([...v.members].map(([k, m]) => [k, plainJson(m)]));
    default:
      return v.value;
  }
}

class JsonReader {
  at = 0;
  private line = 1;
  private lineStart = 0;

  constructor(
    private readonly text: string,
    private readonly file: string,
  ) {}

  fail(expected: string, received?: string, line = this.line, column = this.at - this.lineStart + 1): never {
    const got = received ?? (this.at >= this.text.length ? 'the end of the file' : quoteText(this.text[this.at]));
    throw new InputError({ file: this.file, line, column }, 'JSON syntax', expected, got);
  }

  space(): void {
    const t = this.text;
    while (this.at < t.length) {
      const c = t.charCodeAt(this.at);
      if (c === 10) {
        this.at++;
        this.line++;
        this.lineStart = this.at;
      } else if (c === 32 || c === 9 || c === 13) this.at++;
      else break;
    }
  }

  value(depth: number): PositionedJson {
    if (depth > MAX_DEPTH) this.fail(`nesting at most ${MAX_DEPTH} deep`, 'deeper nesting');
    const line = this.line;
    const column = this.at - this.lineStart + 1;
    const c = this.text[this.at];
    if (c === '{') return this.object(depth, line, column);
    if (c === '[') return this.array(depth, line, column);
    if (c === '"') return { kind: 'string', line, column, value: this.string() };
    if (c === '-' || (c >= '0' && c <= '9')) return { kind: 'number', line, column, value: this.number() };
    for (const [word, value] of [
      ['true', true],
      ['false', false],
      ['null', null],
    ] as const) {
      if (this.text.startsWith(word, this.at)) {
        this.at += word.length;
        return value === null ? { kind: 'null', line, column, value } : { kind: 'boolean', line, column, value };
      }
    }
    return this.fail('a JSON value (object, array, string, number, true, false or null)');
  }

  private object(depth: number, line: number, column: number): PositionedJson {
    this.at++;
    const members = new Map<string, PositionedJson>();
    this.space();
    if (this.text[this.at] === '}') {
      this.at++;
      return { kind: 'object', line, column, members };
    }
    for (;;) {
      this.space();
      if (this.text[this.at] !== '"') this.fail('a member name in double quotes');
      const keyLine = this.line;
      const keyColumn = this.at - this.lineStart + 1;
      const key = this.string();
      if (members.has(key)) this.fail(`each member name once`, `a second ${quoteText(key)}`, keyLine, keyColumn);
      this.space();
      if (this.text[this.at] !== ':') this.fail("':' after the member name");
      this.at++;
      this.space();
      members.set(key, this.value(depth + 1));
      this.space();
      const c = this.text[this.at];
      this.at++;
      if (c === '}') return { kind: 'object', line, column, members };
      if (c !== ',') {
        this.at--;
        this.fail("',' or '}' after a member");
      }
    }
  }

  private array(depth: number, line: number, column: number): PositionedJson {
    this.at++;
    const items: PositionedJson[] = [];
    this.space();
    if (this.text[this.at] === ']') {
      this.at++;
      return { kind: 'array', line, column, items };
    }
    for (;;) {
      this.space();
      items.push(this.value(depth + 1));
      this.space();
      const c = this.text[this.at];
      this.at++;
      if (c === ']') return { kind: 'array', line, column, items };
      if (c !== ',') {
        this.at--;
        this.fail("',' or ']' after an array item");
      }
    }
  }

  private string(): string {
    const t = this.text;
    this.at++;
    let out = '';
    let from = this.at;
    for (;;) {
      if (this.at >= t.length) this.fail('a closing double quote');
      const c = t.charCodeAt(this.at);
      if (c === 34) {
        out += t.slice(from, this.at);
        this.at++;
        return out;
      }
      if (c < 32) this.fail('a character other than a control character in a string (escape it)');
      if (c === 92) {
        out += t.slice(from, this.at);
        const e = t[this.at + 1];
        const simple: Record<string, string> = { '"': '"', '\\': '\\', '/': '/', b: '\b', f: '\f', n: '\n', r: '\r', t: '\t' };
        if (e !== undefined && e in simple) {
          out += simple[e];
          this.at += 2;
        } else if (e === 'u' && /^[0-9a-fA-F]{4}$/.test(t.slice(this.at + 2, this.at + 6))) {
          out += String.fromCharCode(Number.parseInt(t.slice(this.at + 2, this.at + 6), 16));
          this.at += 6;
        } else {
          this.at++;
          this.fail('an escape \\" \\\\ \\/ \\b \\f \\n \\r \\t or \\uXXXX');
        }
        from = this.at;
      } else this.at++;
    }
  }

  private number(): number {
    const m = /^-?(0|[1-9]\d*)(\.\d+)?([eE][+-]?\d+)?/.exec(this.text.slice(this.at, this.at + 400));
    if (!m) return this.fail('a JSON number');
    this.at += m[0].length;
    return Number(m[0]);
  }
}
