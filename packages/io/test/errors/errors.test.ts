import { statSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { inputFailure, kindOf, outputFailure, systemReason } from '../../src/errors/file-system.js';
import { InputError, printable, quoteText, withLinkTarget } from '../../src/errors/input-error.js';
import { OutputError, OutputExistsError } from '../../src/errors/output-error.js';
import { textStart } from '../../src/load/encoding.js';
import { decodeText } from '../../src/load/open-file.js';
import { caught, tempDir } from '../support/temp.js';

const systemError = (code: string) => Object.assign(new Error(`${code}: failed`), { code, syscall: 'open' });

describe('typed errors for the file system', () => {
  it('turns a failed system call into an InputError or OutputError naming the path, what was expected and why', () => {
    const e = inputFailure(systemError('EISDIR'), 'lab/run.csv', 'capture', 'a readable file');
    expect(e).toBeInstanceOf(InputError);
    expect(e.message).toBe('lab/run.csv: capture: expected a readable file, received EISDIR (a folder)');
    const o = outputFailure(systemError('ENOSPC'), 'out/results.csv', 'results table', 'room for the file');
    expect(o).toBeInstanceOf(OutputError);
    expect(o.message).toBe(
      'out/results.csv: results table: expected room for the file, received ENOSPC (no space left on the device)',
    );
    // An unknown code is quoted as it is; a typed error passes through; a bug is not disguised.
    expect(systemReason(systemError('EWEIRD') as never)).toBe('EWEIRD');
    const typed = new InputError({ file: 'x' }, 'w', 'e', 'r');
    expect(outputFailure(typed, 'y', 'w', 'e')).toBe(typed);
    const bug = new TypeError('x is undefined');
    expect(inputFailure(bug, 'y', 'w', 'e')).toBe(bug);
  });

  it('names the kind of a path', () => {
    expect(kindOf(statSync(tempDir()))).toBe('a folder');
    expect(kindOf(statSync('/dev/null'))).toBe('a character device');
  });

  it('keeps the message of OutputExistsError and makes it an OutputError', () => {
    const e = new OutputExistsError('run.json');
    expect(e).toBeInstanceOf(OutputError);
    expect(e.message).toBe(
      'run.json: already exists; refusing to overwrite it (choose another output folder or remove the file)',
    );
  });

  it('names the file a link points to, only for errors about the link', () => {
    const e = new InputError({ file: 'ref.csv', line: 3, column: 1 }, 'header', 'x_re', 'xi');
    const linked = withLinkTarget(e, 'ref.csv', '/data/capture.csv') as InputError;
    expect(linked.message).toBe(
      'ref.csv:3:1: header: expected x_re, received xi (ref.csv is a symbolic link to /data/capture.csv)',
    );
    expect(withLinkTarget(e, 'other.csv', '/x')).toBe(e);
  });
});

describe('printable messages', () => {
  it('escapes what a terminal acts on, keeps line breaks and ordinary text', () => {
    expect(printable('a\u001b[2Jb\u009bc\u202ed\ne é')).toBe('a\\u001b[2Jb\\u009bc\\u202ed\ne é');
    expect(quoteText('\u001b]0;title\u0007')).toBe('"\\u001b]0;title\\u0007"');
    // Cut at 40 characters (not code units), with an ellipsis.
    expect(quoteText('😀'.repeat(50))).toBe(`"${'😀'.repeat(40)}…"`);
  });
});

describe('the first bytes of a text file', () => {
  it('skips a UTF-8 byte-order mark and names other encodings and binary formats', () => {
    expect(textStart(new Uint8Array([0xef, 0xbb, 0xbf, 0x78]))).toEqual({ skip: 3 });
    expect(textStart(new TextEncoder().encode('xi,xq,yi,yq'))).toEqual({ skip: 0 });
    const problem = (bytes: number[]) => (textStart(new Uint8Array(bytes)) as { problem: string }).problem;
    expect(problem([0xff, 0xfe, 0x78, 0])).toMatch(/^UTF-16 text, little-endian/);
    expect(problem([0xfe, 0xff, 0, 0x78])).toMatch(/^UTF-16 text, big-endian/);
    expect(problem([0xff, 0xfe, 0, 0])).toMatch(/^UTF-32/);
    expect(problem([0x78, 0, 0x69, 0, 0x2c, 0, 0x78, 0])).toMatch(/^UTF-16 text without a byte-order mark/);
    expect(problem([0x1f, 0x8b, 8, 0])).toMatch(/^gzip/);
    expect(problem([0x50, 0x4b, 3, 4])).toMatch(/^a ZIP archive/);
    expect(problem([0x28, 0xb5, 0x2f, 0xfd])).toMatch(/^zstd/);
    expect(problem([0x41, 0x52, 0x52, 0x4f, 0x57, 0x31])).toMatch(/Arrow IPC file/);
    expect(problem([0x31, 0x2c, 0, 0x32])).toBe('binary data (zero bytes)');
  });

  it('decodes UTF-8 and names the line of the first byte that is not', () => {
    expect(decodeText(new Uint8Array([0xef, 0xbb, 0xbf, 0x61]), 'f.json', 'descriptor')).toBe('a');
    const e = caught(() => decodeText(new Uint8Array([0x61, 0x0a, 0x62, 0xc3, 0x28]), 'f.json', 'descriptor'));
    expect(e.message).toBe('f.json:2: descriptor encoding: expected UTF-8 text, received a byte that is not UTF-8 (0xc3)');
  });
});
