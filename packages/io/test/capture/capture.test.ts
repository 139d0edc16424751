import { copyFileSync, mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { concatBlocks, constellation, simulate } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { writeCaptureArrow, writeSymbolsArrow } from '../../src/arrow/arrow-write.js';
import { listCaptures, openCapture } from '../../src/capture/capture.js';
import { checkReferenceConstellation } from '../../src/capture/reference.js';
import { InputError } from '../../src/errors/input-error.js';
import { UsageError } from '../../src/errors/usage-error.js';
import { caught, FIXTURES, tempDir } from '../support/temp.js';

function inputError(fn: () => unknown): InputError {
  const e = caught(fn);
  expect(e).toBeInstanceOf(InputError);
  return e as InputError;
}

describe('captures', () => {
  it('opens each fixture capture with its descriptor and reference', () => {
    const c = openCapture(join(FIXTURES, '16qam-scope.csv'));
    expect(c).toMatchObject({
      name: '16qam-scope',
      format: 'csv',
      sampleRate: 80e9,
      symbolRate: 32e9,
      samplesPerSymbol: 2.5,
      modulation: '16qam',
      rollOff: 0.1,
      dispersionPsPerNm: 340,
    });
    expect(c.reference.symbols).toBe(8192);
    const block = concatBlocks([...c.blocks({ blockSize: 1000 })]);
    expect(block.xi.length).toBe(20480);
    expect(block.samplesPerSymbol).toBe(2.5);
    // Given by its descriptor, and overridden from the command line.
    expect(openCapture(join(FIXTURES, 'qpsk-clean.json'), { rollOff: 0.3 }).rollOff).toBe(0.3);
    // A bad override is blamed on its option, not on the descriptor.
    const override = caught(() => openCapture(join(FIXTURES, 'qpsk-clean.csv'), { rollOff: 3 }));
    expect(override).toBeInstanceOf(UsageError);
    expect(override.message).toBe('--roll-off: expected a roll-off in (0, 1], received 3');
    expect(openCapture(join(FIXTURES, '64qam-time-column.csv')).modulation).toBe('64qam');
  });

  it('lists every data file with a descriptor beside it, in subfolders too, and nothing else', () => {
    const dir = tempDir();
    mkdirSync(join(dir, 'day2', 'deep'), { recursive: true });
    for (const f of ['qpsk-clean.csv', 'qpsk-clean.json', 'qpsk-clean-reference.csv'])
      copyFileSync(join(FIXTURES, f), join(dir, f));
    for (const f of ['16qam-scope.csv', '16qam-scope.json', '16qam-scope-reference.csv'])
      copyFileSync(join(FIXTURES, f), join(dir, 'day2', 'deep', f));
    writeFileSync(join(dir, 'orphan.csv'), 'xi,xq,yi,yq\n1,2,3,4\n');
    writeFileSync(join(dir, 'scenario.json'), '{}');
    writeFileSync(join(dir, '.hidden.csv'), '');
    writeFileSync(join(dir, '.hidden.json'), '{}');
    expect(listCaptures(dir)).toEqual([join(dir, 'day2', 'deep', '16qam-scope.csv'), join(dir, 'qpsk-clean.csv')]);
  });

  it('reads an Arrow capture described by its schema metadata, with an Arrow reference', () => {
    const dir = tempDir();
    const sim = simulate({ seed: 3, modulation: 'qpsk', symbols: 64, symbolRate: 32e9, channel: { esN0Db: 15 } });
    writeSymbolsArrow(join(dir, 'tx.arrow'), sim.reference);
    writeCaptureArrow(join(dir, 'run.arrow'), sim.channels, {
      metadata: { symbolRate: '32e9', modulation: 'qpsk', reference: 'tx.arrow' },
    });
    const c = openCapture(join(dir, 'run.arrow'));
    expect(c).toMatchObject({ format: 'arrow', descriptorPath: undefined, sampleRate: 64e9, modulation: 'qpsk' });
    expect(Array.from(concatBlocks([...c.blocks()]).xi)).toEqual(Array.from(sim.channels.xi));
    // A sidecar wins over the metadata.
    writeFileSync(join(dir, 'run.json'), JSON.stringify({ symbolRate: 32e9, modulation: '16qam', reference: 'tx.arrow' }));
    expect(inputError(() => openCapture(join(dir, 'run.arrow'))).message).toMatch(/using 2 of them/);
  });

  it('refuses a missing descriptor, a missing, short or wrong reference, each precisely', () => {
    const dir = tempDir();
    for (const f of ['qpsk-clean.csv', 'qpsk-clean-reference.csv']) copyFileSync(join(FIXTURES, f), join(dir, f));
    const data = join(dir, 'qpsk-clean.csv');
    expect(inputError(() => openCapture(data)).message).toMatch(
      /descriptor: expected a descriptor .*qpsk-clean.json beside the data file, received none/,
    );
    const descriptor = join(dir, 'qpsk-clean.json');
    const write = (o: object) =>
      writeFileSync(descriptor, JSON.stringify({ sampleRate: 64e9, symbolRate: 32e9, modulation: 'qpsk', ...o }));
    write({ reference: 'absent.csv' });
    expect(inputError(() => openCapture(data)).message).toMatch(
      /qpsk-clean.json: field 'reference': expected the path of an existing file.*"absent.csv"/,
    );
    writeFileSync(join(dir, 'short.csv'), `x_re,x_im,y_re,y_im\n${'1,1,1,-1\n'.repeat(10)}`);
    write({ reference: 'short.csv' });
    expect(inputError(() => openCapture(data)).message).toMatch(
      /short.csv: reference: expected at least 32 symbols, received 10/,
    );
    writeFileSync(join(dir, 'bad.csv'), `x_re,x_im,y_re,y_im\n${'1,1,1,-1\n'.repeat(40)}1,1,1,x\n`);
    write({ reference: 'bad.csv' });
    expect(inputError(() => openCapture(data)).message).toMatch(
      /bad.csv:42:7: column 'y_im' \(field 4\): expected a finite decimal number, received "x"/,
    );
    write({ reference: 'qpsk-clean-reference.csv', modulation: '16qam' });
    expect(inputError(() => openCapture(data)).message).toMatch(
      /reference: expected symbols using all 4 levels per axis of 16qam.*received symbols using 2/,
    );
    write({ reference: 'qpsk-clean-reference.csv', sampleRate: undefined });
    expect(inputError(() => openCapture(data)).message).toMatch(
      /qpsk-clean.csv:3:1: sample rate: expected a time column 't' \(seconds\) or a stated sample rate/,
    );
  });

  it('tells every pair of modulations apart from a reference of 32 symbols, at any scale', () => {
    // The minimum length: a genuine pattern of 32 symbols uses every level
    // (see checkReferenceConstellation for the probabilities).
    const names = ['qpsk', '16qam', '64qam'] as const;
    for (const [i, actual] of names.entries()) {
      const sim = simulate({ seed: 70 + i, modulation: actual, symbols: 32, symbolRate: 32e9 });
      const scaled = {
        x: sim.reference.x.map((v) => 1234 * v) as typeof sim.reference.x,
        y: sim.reference.y.map((v) => 1234 * v) as typeof sim.reference.y,
      };
      for (const stated of names) {
        const check = () => checkReferenceConstellation(scaled, constellation(stated), 'ref.csv');
        if (stated === actual) expect(check).not.toThrow();
        else expect(check, `${actual} as ${stated}`).toThrow(InputError);
      }
    }
  });
});
