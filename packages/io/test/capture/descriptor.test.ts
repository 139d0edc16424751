import { describe, expect, it } from 'vitest';
import { parseDescriptor } from '../../src/capture/descriptor.js';
import { InputError } from '../../src/errors/input-error.js';
import { caught } from '../support/temp.js';

const ok = { sampleRate: 80e9, symbolRate: 32e9, modulation: '16qam', reference: 'tx.csv' };

function fails(text: string): InputError {
  const e = caught(() => parseDescriptor(text, 'run.json'));
  expect(e).toBeInstanceOf(InputError);
  return e as InputError;
}

describe('descriptor', () => {
  it('reads the required fields and applies the documented defaults', () => {
    expect(parseDescriptor(JSON.stringify(ok), 'run.json')).toEqual({ ...ok, rollOff: 0.1 });
    const full = parseDescriptor(
      JSON.stringify({
        ...ok,
        modulation: '64QAM',
        rollOff: 0.2,
        dispersionPsPerNm: -340,
        columns: { xi: 'CH1', t: 'Time' },
        notes: 'bench 3',
        simulation: { any: [1, 2] },
      }),
      'run.json',
    );
    expect(full).toEqual({
      ...ok,
      modulation: '64qam',
      rollOff: 0.2,
      dispersionPsPerNm: -340,
      columns: { xi: 'CH1', t: 'Time' },
      notes: 'bench 3',
    });
    // sampleRate may be left to a time column.
    const { sampleRate: _, ...noRate } = ok;
    expect(parseDescriptor(JSON.stringify(noRate), 'run.json').sampleRate).toBeUndefined();
  });

  it('names the line and column of a JSON syntax error', () => {
    const e = fails('{\n  "symbolRate": 32e9,\n  "modulation": }\n');
    expect([e.line, e.column]).toEqual([3, 17]);
    expect(e.message).toBe(
      'run.json:3:17: JSON syntax: expected a JSON value (object, array, string, number, true, false or null), received "}"',
    );
    expect(fails('{"a": 1,').message).toMatch(/run.json:1:9: .*received the end of the file/);
    expect(fails('').message).toMatch(/run.json:1:1: JSON syntax/);
    expect(fails('{"a": 1} x').message).toMatch(/expected the end of the document/);
    expect(fails('{"a": 1, "a": 2}').message).toMatch(/run.json:1:10: .*each member name once, received a second "a"/);
  });

  it('names the field, the position, what was expected and what was received', () => {
    const cases: [object | string, RegExp][] = [
      [[1, 2], /run.json:1:1: descriptor: expected a JSON object, received a JSON array/],
      [
        { ...ok, symbolRate: undefined },
        /field 'symbolRate': expected a positive number of Bd, received nothing \(the field is missing\)/,
      ],
      [{ ...ok, symbolRate: -1 }, /field 'symbolRate': expected a positive number of Bd, received -1/],
      [{ ...ok, sampleRate: '80e9' }, /field 'sampleRate': expected a positive number of Sa\/s, received the string "80e9"/],
      [{ ...ok, sampleRate: 16e9 }, /field 'sampleRate': expected at least the symbol rate/],
      [
        { ...ok, modulation: '8psk' },
        /field 'modulation': expected one of "qpsk", "8qam", "16qam", "32qam", "64qam", "128qam", "256qam", "ps-64qam", "ps-256qam" .*, received the string "8psk"/,
      ],
      [{ ...ok, reference: '' }, /field 'reference': expected the path of the reference symbols/],
      [{ ...ok, reference: undefined }, /field 'reference'.*received nothing/],
      [{ ...ok, rollOff: 1.5 }, /field 'rollOff': expected a roll-off in \(0, 1\], received 1.5/],
      [{ ...ok, dispersionPsPerNm: 'large' }, /field 'dispersionPsPerNm': expected a finite number of ps\/nm/],
      [{ ...ok, columns: { zz: 'CH1' } }, /field 'columns': expected keys among xi, xq, yi, yq, t/],
      [{ ...ok, symbolrate: 1 }, /field 'symbolrate': expected one of the descriptor fields .*received an unknown field/],
    ];
    for (const [doc, message] of cases) {
      const text = typeof doc === 'string' ? doc : JSON.stringify(doc, null, 2);
      expect(fails(text).message, text).toMatch(message);
    }
    // The position is the field's value.
    const e = fails('{\n  "symbolRate": 32e9,\n  "modulation": "qpsk",\n  "reference": "r.csv",\n  "rollOff": 3\n}');
    expect([e.line, e.column]).toEqual([5, 14]);
    expect(fails('{"symbolRate": 1e999, "modulation": "qpsk", "reference": "r.csv"}').message).toMatch(/received Infinity/);
  });

  it('reads the added formats, and a shaped one from its family and shaping field, as its canonical name', () => {
    for (const m of ['8qam', '32QAM', '128qam', '256qam'])
      expect(parseDescriptor(JSON.stringify({ ...ok, modulation: m }), 'run.json').modulation).toBe(m.toLowerCase());
    const shaped = (shaping: unknown, modulation = 'PS-64QAM') =>
      parseDescriptor(JSON.stringify({ ...ok, modulation, shaping }), 'run.json').modulation;
    expect(shaped({ entropy: 4.5 })).toBe('ps-64qam:entropy=4.5');
    expect(shaped({ nu: 0.01 }, 'ps-256qam')).toBe('ps-256qam:nu=0.01');
    // The name the analysis writes is read back as it is.
    expect(parseDescriptor(JSON.stringify({ ...ok, modulation: 'ps-64qam:entropy=4.50' }), 'run.json').modulation).toBe(
      'ps-64qam:entropy=4.5',
    );
  });

  it('names the shaping field and what it needs when the shaping is missing, out of range or given to a uniform format', () => {
    const cases: [object, RegExp][] = [
      [
        { ...ok, modulation: 'ps-64qam' },
        /field 'shaping': expected \{"entropy": H\} \(bits per symbol\) or \{"nu": ν\} for ps-64qam/,
      ],
      [
        { ...ok, modulation: 'ps-64qam', shaping: { entropy: 6.5 } },
        /field 'shaping': expected an entropy above 2 and at most 6 bits/,
      ],
      [{ ...ok, modulation: 'ps-64qam', shaping: { nu: -1 } }, /field 'shaping': expected a finite ν ≥ 0/],
      [{ ...ok, modulation: 'ps-64qam', shaping: { entropy: 4, nu: 0.1 } }, /field 'shaping': expected \{"entropy": H\}/],
      [{ ...ok, shaping: { entropy: 3 } }, /field 'shaping': expected no shaping for "16qam"/],
      [{ ...ok, modulation: 'ps-16qam' }, /field 'modulation': expected one of "qpsk", "8qam", .*"ps-64qam", "ps-256qam"/],
    ];
    for (const [doc, message] of cases) {
      const text = JSON.stringify(doc, null, 2);
      expect(fails(text).message, text).toMatch(message);
    }
  });
});
