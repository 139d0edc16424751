import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readPipelineFile } from '../../src/analysis/pipeline-file.js';
import { InputError } from '../../src/errors/input-error.js';
import { caught, tempDir } from '../support/temp.js';

/** Writes a pipeline file and reads it back, returning the error it gives. */
function refused(text: string): InputError {
  const path = join(tempDir(), 'p.json');
  writeFileSync(path, text);
  const e = caught(() => readPipelineFile(path));
  expect(e).toBeInstanceOf(InputError);
  return e as InputError;
}

describe('a pipeline file', () => {
  it('is read with its algorithms, stage options and analysis settings', () => {
    const path = join(tempDir(), 'p.json');
    const doc = {
      receiver: { phaseRecovery: 'viterbi-viterbi', expectedDgdPs: 20, options: { phase: { halfWindow: 12 } } },
      analysis: { skipSymbols: 4096 },
    };
    writeFileSync(path, JSON.stringify(doc));
    expect(readPipelineFile(path)).toEqual(doc);
  });

  it('names the line and column of a key the settings do not have, and the keys they do', () => {
    const e = refused('{\n  "receiver": {\n    "phaseRecovry": "viterbi-viterbi"\n  }\n}');
    expect([e.line, e.column]).toEqual([3, 21]);
    expect(e.message).toMatch(/key 'receiver\.phaseRecovry': expected one of .*'phaseRecovery'/);
    expect(refused('{"receiver": {"options": {"carrier": {}}}}').message).toMatch(/key 'receiver\.options\.carrier'/);
    expect(refused('{"pipeline": {}}').message).toMatch(/key 'pipeline': expected one of 'receiver', 'analysis'/);
  });

  it('names the place of a value the receiver or the analysis refuses, with the rule it breaks', () => {
    const algorithm = refused('{"receiver": {"equalizerRule": "lms"}}');
    expect(algorithm.message).toMatch(/1:32: key 'receiver\.equalizerRule': expected one of cma, rde/);
    expect(algorithm.message).toMatch(/received 'lms'/);
    // A stage's own option: the stage says what it accepts; the file says where it was written.
    const taps = refused('{\n"receiver": {"options": {"equalizer": {"taps": 12}}}\n}');
    expect([taps.line, taps.column]).toEqual([2, 48]);
    expect(taps.message).toMatch(/key 'receiver\.options\.equalizer\.taps': expected an odd number of taps/);
    expect(refused('{"analysis": {"skipSymbols": 1.5}}').message).toMatch(/key 'analysis\.skipSymbols': expected an integer ≥ 0/);
    expect(refused('{"receiver": {"options": {"phase": 3}}}').message).toMatch(/a JSON object of options/);
  });
});
