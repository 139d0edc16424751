import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { concatBlocks, simulate } from '@intradyne/core';
import { Float64, makeVector, type RecordBatch, Table, tableFromIPC, tableToIPC, vectorFromArray } from 'apache-arrow';
import { describe, expect, it } from 'vitest';
import {
  loadArrowCapture,
  loadReferenceArrow,
  readArrowCapture,
  readArrowCaptureAsync,
  readArrowMetadata,
} from '../../src/arrow/arrow-capture.js';
import {
  writeCaptureArrow,
  writeResultsArrow,
  writeSymbolsArrow,
  writeSymbolsArrowStreaming,
} from '../../src/arrow/arrow-write.js';
import { loadReferenceCsv } from '../../src/capture/reference.js';
import { InputError } from '../../src/errors/input-error.js';
import { loadCsvCapture } from '../../src/load/csv-capture.js';
import { writeCaptureCsv, writeReferenceCsv } from '../../src/write/csv.js';
import { caught, FIXTURES, tempDir } from '../support/temp.js';

// 128 symbols at 2 Sa/symbol: enough rows for several batches; the checks are bit-exact.
const sim = simulate({ seed: 9, modulation: '16qam', symbols: 128, symbolRate: 32e9, channel: { esN0Db: 18 } });

function arrowError(fn: () => unknown): InputError {
  const e = caught(fn);
  expect(e).toBeInstanceOf(InputError);
  return e as InputError;
}

/** An IPC file of several record batches from column arrays. */
function batches(columns: Record<string, Float64Array | Float32Array>, sizes: number[], format: 'file' | 'stream' = 'file') {
  const parts: RecordBatch[] = [];
  let at = 0;
  for (const n of sizes) {
    const cols = Object.fromEntries(Object.entries(columns).map(([k, v]) => [k, makeVector(v.subarray(at, at + n))]));
    parts.push(...new Table(cols).batches);
    at += n;
  }
  return tableToIPC(new Table(parts), format);
}

describe('Arrow IPC', () => {
  it('round-trips CSV → Arrow → CSV bit for bit, in file and stream formats', () => {
    const dir = tempDir();
    writeCaptureCsv(join(dir, 'a.csv'), sim.channels);
    const fromCsv = loadCsvCapture(join(dir, 'a.csv'), { sampleRate: 64e9 });
    for (const [name, format] of [
      ['b.arrow', 'file'],
      ['b.arrows', 'stream'],
    ] as const) {
      writeCaptureArrow(join(dir, name), fromCsv, { format, metadata: { modulation: '16qam' } });
      const back = loadArrowCapture(join(dir, name));
      expect(back.sampleRate).toBe(64e9);
      for (const c of ['xi', 'xq', 'yi', 'yq'] as const) expect(Array.from(back[c])).toEqual(Array.from(sim.channels[c]));
      expect(readArrowMetadata(join(dir, name)).get('modulation')).toBe('16qam');
    }
    writeCaptureCsv(join(dir, 'c.csv'), loadArrowCapture(join(dir, 'b.arrows')));
    const again = loadCsvCapture(join(dir, 'c.csv'), { sampleRate: 64e9 });
    expect(Array.from(again.yq)).toEqual(Array.from(sim.channels.yq));
  });

  it('reads several record batches, float32 and float64, synchronously and asynchronously', async () => {
    const dir = tempDir();
    const { xi, xq, yi, yq } = sim.channels;
    const path = join(dir, 'multi.arrow');
    writeFileSync(path, batches({ XI: Float32Array.from(xi), xq, yi, yq: Float32Array.from(yq) }, [100, 1, 155]));
    const blocks = [...readArrowCapture(path, { sampleRate: 64e9, columns: { xi: 'XI' } })];
    expect(blocks.map((b) => b.xi.length)).toEqual([100, 1, 155]);
    const whole = concatBlocks(blocks);
    // float32 columns come back as the float32 values, widened exactly.
    expect(Array.from(whole.xi)).toEqual(Array.from(Float32Array.from(xi)));
    expect(Array.from(whole.xq)).toEqual(Array.from(xq));
    const viaAsync = [];
    for await (const b of readArrowCaptureAsync(path, { sampleRate: 64e9, columns: { xi: 'XI' } })) viaAsync.push(b);
    expect(Array.from(concatBlocks(viaAsync).yq)).toEqual(Array.from(whole.yq));
    const damaged = join(dir, 'damaged.arrows');
    const full = batches({ xi, xq, yi, yq }, [128, 128], 'stream');
    writeFileSync(damaged, full.subarray(0, full.length - 500));
    await expect(async () => {
      for await (const _ of readArrowCaptureAsync(damaged, { sampleRate: 64e9 })) {
        // reading
      }
    }).rejects.toThrow(InputError);
    const stream = join(dir, 'multi.arrows');
    writeFileSync(stream, batches({ xi, xq, yi, yq }, [10, 246], 'stream'));
    const fromStream = [];
    for await (const b of readArrowCaptureAsync(stream, { sampleRate: 64e9 })) fromStream.push(b);
    expect(fromStream.map((b) => b.xi.length)).toEqual([10, 246]);
  });

  it('writes long captures in record batches of 65,536 rows and reads them back batch by batch across read chunks', async () => {
    // 200,000 rows of four float64 columns: 6.4 MB, more than one 4 MB read chunk, so batches straddle chunks.
    const n = 200000;
    const ramp = (k: number) => Float64Array.from({ length: n }, (_, i) => i * 1e-3 + k);
    const channels = { xi: ramp(0), xq: ramp(1), yi: ramp(2), yq: ramp(3), sampleRate: 64e9 };
    const dir = tempDir();
    for (const [name, format] of [
      ['long.arrow', 'file'],
      ['long.arrows', 'stream'],
    ] as const) {
      const path = join(dir, name);
      writeCaptureArrow(path, channels, { format });
      const blocks = [...readArrowCapture(path)];
      expect(blocks.map((b) => b.xi.length)).toEqual([65536, 65536, 65536, n - 3 * 65536]);
      const whole = concatBlocks(blocks);
      const same = (a: Float64Array, b: Float64Array) =>
        Buffer.from(a.buffer, a.byteOffset, a.byteLength).equals(Buffer.from(b.buffer, b.byteOffset, b.byteLength));
      for (const c of ['xi', 'xq', 'yi', 'yq'] as const) expect(same(whole[c], channels[c])).toBe(true);
      const viaAsync = [];
      for await (const b of readArrowCaptureAsync(path)) viaAsync.push(b);
      expect(same(concatBlocks(viaAsync).yq, channels.yq)).toBe(true);
      expect(readArrowMetadata(path).get('sampleRate')).toBe('64000000000');
    }
  });

  it('writes symbols as they come, in blocks of any size (empty ones too), as writeSymbolsArrow writes them at once', () => {
    const dir = tempDir();
    const n = 70000;
    const x = Float64Array.from({ length: 2 * n }, (_, i) => i * 0.5);
    const y = Float64Array.from({ length: 2 * n }, (_, i) => -i);
    const cuts = [0, 0, 3, 3, 69000, n];
    const got = writeSymbolsArrowStreaming(join(dir, 'streamed.arrow'), (add) => {
      for (let k = 1; k < cuts.length; k++) {
        add({ x: x.subarray(2 * cuts[k - 1], 2 * cuts[k]), y: y.subarray(2 * cuts[k - 1], 2 * cuts[k]) } as never);
      }
      return 'done';
    });
    expect(got).toBe('done');
    writeSymbolsArrow(join(dir, 'whole.arrow'), { x, y } as never);
    const a = tableFromIPC(readFileSync(join(dir, 'streamed.arrow')));
    const b = tableFromIPC(readFileSync(join(dir, 'whole.arrow')));
    expect(a.numRows).toBe(n);
    for (const c of ['x_re', 'x_im', 'y_re', 'y_im']) expect(a.getChild(c)!.toArray()).toEqual(b.getChild(c)!.toArray());
    // Read back by this library's own reader too (schema from the footer, batches streamed).
    expect(loadReferenceArrow(join(dir, 'streamed.arrow')).x.length).toBe(2 * n);
    // No symbols: a valid file with the four columns and no row.
    writeSymbolsArrowStreaming(join(dir, 'none.arrow'), () => undefined);
    const none = tableFromIPC(readFileSync(join(dir, 'none.arrow')));
    expect(none.schema.fields.map((f) => f.name)).toEqual(['x_re', 'x_im', 'y_re', 'y_im']);
    expect(none.numRows).toBe(0);
    // A producer that fails leaves no file.
    expect(() =>
      writeSymbolsArrowStreaming(join(dir, 'failed.arrow'), () => {
        throw new Error('stop');
      }),
    ).toThrow('stop');
    expect(() => readFileSync(join(dir, 'failed.arrow'))).toThrow();
  });

  it('refuses nulls (naming column and row), NaN, non-float, missing or duplicate columns, bytes that are not Arrow', () => {
    const dir = tempDir();
    const n = 5;
    const f = () => new Float64Array(n).fill(0.5);
    const withNull = vectorFromArray([1, 2, null, 4, 5], new Float64());
    const t1 = new Table({
      xi: makeVector(f()),
      xq: vectorFromArray([1, 2, 3, 4, 5], new Float64()),
      yi: makeVector(f()),
      yq: makeVector(f()),
    });
    const t2 = new Table({ xi: makeVector(f()), xq: withNull, yi: makeVector(f()), yq: makeVector(f()) });
    const path = join(dir, 'nulls.arrow');
    writeFileSync(path, tableToIPC(new Table([...t1.batches, ...t2.batches]), 'file'));
    // Row 3 of the second batch is row 8 of the file.
    expect(arrowError(() => loadArrowCapture(path, { sampleRate: 1e9 })).message).toBe(
      `${path}: column 'xq', row 8: expected a number, received null`,
    );
    const nan = f();
    nan[3] = Number.NaN;
    writeFileSync(
      path,
      tableToIPC(new Table({ xi: makeVector(f()), xq: makeVector(f()), yi: makeVector(nan), yq: makeVector(f()) })),
    );
    expect(arrowError(() => loadArrowCapture(path, { sampleRate: 1e9 })).message).toMatch(
      /column 'yi', row 4: expected a finite number, received NaN/,
    );
    writeFileSync(
      path,
      tableToIPC(new Table({ xi: makeVector(f()), xq: makeVector(f()), yi: makeVector(f()), yq: makeVector(new Int32Array(n)) })),
    );
    expect(arrowError(() => loadArrowCapture(path, { sampleRate: 1e9 })).message).toMatch(
      /column 'yq': expected a float32 or float64 column, received type Int32/,
    );
    writeFileSync(path, tableToIPC(new Table({ xi: makeVector(f()), xq: makeVector(f()), yi: makeVector(f()) })));
    expect(arrowError(() => loadArrowCapture(path, { sampleRate: 1e9 })).message).toMatch(/expected one column named 'yq'/);
    writeFileSync(
      path,
      tableToIPC(
        new Table({ xi: makeVector(f()), XI: makeVector(f()), xq: makeVector(f()), yi: makeVector(f()), yq: makeVector(f()) }),
      ),
    );
    expect(arrowError(() => loadArrowCapture(path, { sampleRate: 1e9 })).message).toMatch(/received 2 of them \(fields 1, 2\)/);
    writeFileSync(
      path,
      tableToIPC(new Table({ xi: makeVector(f()), xq: makeVector(f()), yi: makeVector(f()), yq: makeVector(f()) })),
    );
    expect(arrowError(() => loadArrowCapture(path)).message).toMatch(/sample rate: expected a stated sample rate/);
    // A truncated file (the first 60 % of its bytes), read both ways.
    const whole = tableToIPC(new Table([...t1.batches, ...t1.batches]), 'stream');
    writeFileSync(path, whole.subarray(0, Math.floor(whole.length * 0.6)));
    expect(caught(() => loadArrowCapture(path, { sampleRate: 1e9 }))).toBeInstanceOf(InputError);
    expect(caught(() => loadArrowCapture(join(dir, 'missing.arrow'), { sampleRate: 1e9 })).message).toMatch(
      /missing.arrow: capture: expected a readable file, received ENOENT \(no such file or folder\)/,
    );
    writeFileSync(path, 'xi,xq,yi,yq\n1,2,3,4\n');
    expect(arrowError(() => loadArrowCapture(path, { sampleRate: 1e9 })).message).toMatch(/expected an Arrow IPC file or stream/);
  });

  it('writes recovered symbols and references that read back as CSV and Arrow alike', () => {
    const dir = tempDir();
    writeSymbolsArrow(join(dir, 'ref.arrow'), sim.reference);
    writeReferenceCsv(join(dir, 'ref.csv'), sim.reference);
    const a = loadReferenceArrow(join(dir, 'ref.arrow'));
    const c = loadReferenceCsv(join(dir, 'ref.csv'));
    expect(Array.from(a.x)).toEqual(Array.from(sim.reference.x));
    expect(Array.from(c.y)).toEqual(Array.from(a.y));
    const t = tableFromIPC(new Uint8Array(readFileSync(join(dir, 'ref.arrow'))));
    expect(t.schema.fields.map((f) => f.name)).toEqual(['x_re', 'x_im', 'y_re', 'y_im']);
    // The fixture references load too.
    expect(loadReferenceCsv(join(FIXTURES, 'qpsk-clean-reference.csv')).x.length).toBe(2 * 8192);
  });

  it('writes a results table with numeric, integer, boolean, string and missing values, each with its Arrow type', () => {
    const dir = tempDir();
    const path = join(dir, 'results.arrow');
    writeResultsArrow(
      path,
      [
        { capture: 'a', ber: 1e-3, snrDb: 15.2, converged: true, bits: 2 ** 40 },
        { capture: 'b', ber: null, snrDb: 9.1, note: 'slipped', bits: null },
      ],
      { integerColumns: ['bits'] },
    );
    const t = tableFromIPC(new Uint8Array(readFileSync(path)));
    expect(t.schema.fields.map((f) => [f.name, String(f.type)])).toEqual([
      ['capture', 'Utf8'],
      ['ber', 'Float64'],
      ['snrDb', 'Float64'],
      ['converged', 'Bool'],
      ['bits', 'Int64'],
      ['note', 'Utf8'],
    ]);
    expect(t.getChild('ber')?.get(1)).toBeNull();
    expect(t.getChild('converged')?.get(0)).toBe(true);
    expect(t.getChild('converged')?.get(1)).toBeNull();
    // 2^40 bits: exact as an Int64, which a float64 holds too, but a count is a count.
    expect(t.getChild('bits')?.get(0)).toBe(2n ** 40n);
    expect(t.getChild('bits')?.get(1)).toBeNull();
    expect(() => writeResultsArrow(join(dir, 'fraction.arrow'), [{ bits: 1.5 }], { integerColumns: ['bits'] })).toThrow(
      /column 'bits' expected whole numbers, received 1.5/,
    );
    expect(t.getChild('note')?.get(1)).toBe('slipped');
    // Atomic writer: an existing file is never replaced without `overwrite`.
    expect(() => writeResultsArrow(path, [{ a: 1 }])).toThrow(/already exists/);
    expect(() => writeResultsArrow(join(dir, 'mixed.arrow'), [{ a: 1 }, { a: 'x' }])).toThrow(
      /column 'a' expected numbers, booleans or strings, received a mix/,
    );
  });
});
