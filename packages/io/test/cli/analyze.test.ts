import { copyFileSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import erfcinv from '@stdlib/math-base-special-erfcinv';
import { tableFromIPC } from 'apache-arrow';
import { describe, expect, it } from 'vitest';
import { runMain } from '../support/run-cli.js';
import { FIXTURES, tempDir } from '../support/temp.js';

const FIELDS = [
  'ber',
  'berCi95',
  'bitErrors',
  'bits',
  'ser',
  'evmRms',
  'snrDb',
  'qDb',
  'gmi',
  'ngmi',
  'mi',
  'freqOffsetHz',
  'cycleSlips',
];
const BITS_PER_SYMBOL: Record<string, number> = { qpsk: 2, '16qam': 4, '64qam': 6 };

/** A copy of a fixture capture (data and reference) in a fresh folder, to break or relabel. */
function copyFixture(name: string): string {
  const dir = tempDir();
  copyFileSync(join(FIXTURES, `${name}.csv`), join(dir, `${name}.csv`));
  copyFileSync(join(FIXTURES, `${name}-reference.csv`), join(dir, `${name}-reference.csv`));
  return dir;
}

describe('intradyne analyze, end to end on the fixtures', () => {
  it('prints a summary and exits 0', async () => {
    const r = await runMain(['analyze', join(FIXTURES, 'qpsk-clean.json')]);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^qpsk-clean: qpsk at 32 GBd, 64 GSa\/s/);
    expect(r.stdout).toMatch(/\ntotal +/);
    expect(r.stdout).toMatch(/frequency offset .* MHz/);
  });

  it('prints one JSON object with the DESIGN.md fields, consistent with the published formulas', async () => {
    for (const name of ['qpsk-clean', '16qam-scope', '64qam-time-column']) {
      const r = await runMain(['analyze', join(FIXTURES, `${name}.csv`), '--json']);
      expect(r.code).toBe(0);
      const j = JSON.parse(r.stdout);
      expect(j.ok).toBe(true);
      for (const f of FIELDS) expect(j[f], `${name}: ${f}`).not.toBeNull();
      for (const p of ['x', 'y']) for (const f of FIELDS) expect(j.perPol[p][f], `${name}: perPol.${p}.${f}`).not.toBeNull();
      expect(j.diagnostics).toBeTypeOf('object');
      expect(j.berCi95[0]).toBeLessThanOrEqual(j.ber);
      expect(j.berCi95[1]).toBeGreaterThanOrEqual(j.ber);
      // With errors the BER is their fraction; without, a bound (reported as such).
      if (j.bitErrors > 0) expect(j.ber).toBeCloseTo(j.bitErrors / j.bits, 15);
      else expect(j.berIsUpperBound).toBe(true);
      expect(j.bits).toBe(j.perPol.x.bits + j.perPol.y.bits);
      // Q from BER, Q = √2·erfc⁻¹(2·BER) (common practice), with @stdlib's erfcinv; rounding only.
      expect(j.qDb).toBeCloseTo(20 * Math.log10(Math.SQRT2 * erfcinv(2 * j.ber)), 9);
      // NGMI = GMI / log2 M (Alvarado et al., JLT 33(20), 2015); rounding only.
      expect(j.ngmi).toBeCloseTo(j.gmi / BITS_PER_SYMBOL[j.modulation], 12);
      // Data-aided SNR ≈ 1/EVM² (Shafik, Rahman, Islam 2006): both estimate the same noise on
      // thousands of symbols; 0.3 dB allows the SNR estimator's own normalization.
      expect(Math.abs(j.snrDb + 20 * Math.log10(j.evmRms))).toBeLessThan(0.3);
    }
  });

  it('measures the clean QPSK fixture at the Es/N0 it was simulated with', async () => {
    const j = JSON.parse((await runMain(['analyze', join(FIXTURES, 'qpsk-clean.json'), '--json'])).stdout);
    const truth = JSON.parse(readFileSync(join(FIXTURES, 'qpsk-clean.json'), 'utf8')).simulation.truth.esN0Db;
    // 14 dB simulated (the descriptor's truth). The SNR estimate over ~12 000 symbols has a
    // standard deviation of about 10·log10(1 + √(2/12000)) ≈ 0.06 dB; 0.3 dB also allows the
    // receiver's small implementation loss.
    expect(Math.abs(j.snrDb - truth)).toBeLessThan(0.3);
    // QPSK at 14 dB: BER = ½·erfc(√(SNR/2)) ≈ 1e-7 (Cho & Yoon 2002), so no error in 24 576 bits is expected.
    expect(j.bitErrors).toBe(0);
  });

  it('writes the analysis JSON and a symbols Arrow file that reads back, and leaves the input alone', async () => {
    const out = tempDir();
    const before = readdirSync(FIXTURES).sort();
    const r = await runMain(['analyze', join(FIXTURES, 'qpsk-clean.json'), '--out', out, '--json']);
    expect(r.code).toBe(0);
    expect(readdirSync(out).sort()).toEqual(['qpsk-clean.analysis.json', 'qpsk-clean.symbols.arrow']);
    const written = JSON.parse(readFileSync(join(out, 'qpsk-clean.analysis.json'), 'utf8'));
    expect(written).toEqual(JSON.parse(r.stdout));
    const table = tableFromIPC(readFileSync(join(out, 'qpsk-clean.symbols.arrow')));
    expect(table.schema.fields.map((f) => f.name)).toEqual(['x_re', 'x_im', 'y_re', 'y_im']);
    // Every measured symbol of a polarization was recovered and written (the skipped lead-in too).
    expect(table.numRows).toBeGreaterThanOrEqual(written.perPol.x.symbols);
    let power = 0;
    const xr = table.getChild('x_re')!.toArray() as Float64Array;
    const xi = table.getChild('x_im')!.toArray() as Float64Array;
    for (let k = 0; k < table.numRows; k++) power += xr[k] * xr[k] + xi[k] * xi[k];
    // Recovered symbols are scaled to the unit-power constellation (DEVELOPERS.md); at 14 dB the
    // noise adds 10^-1.4 ≈ 4 %, the adaptation lead-in a little more: 15 %.
    expect(Math.abs(power / table.numRows - 1)).toBeLessThan(0.15);
    expect(readdirSync(FIXTURES).sort()).toEqual(before);
  });

  it('writes a self-contained HTML report with --report, and never over an input', async () => {
    const out = tempDir();
    const report = join(out, 'qpsk-clean.html');
    const r = await runMain(['analyze', join(FIXTURES, 'qpsk-clean.csv'), '--report', report]);
    expect(r.code, r.stderr).toBe(0);
    const html = readFileSync(report, 'utf8');
    expect(html.match(/data-plot="density"/g)).toHaveLength(2);
    // QPSK: four ideal points per polarization.
    expect(html.match(/class="ideal"/g)).toHaveLength(8);
    expect(html).not.toMatch(/<script|src=|href=/i);
    const data = join(out, 'copy.csv');
    copyFileSync(join(FIXTURES, 'qpsk-clean.csv'), data);
    copyFileSync(join(FIXTURES, 'qpsk-clean.json'), join(out, 'copy.json'));
    copyFileSync(join(FIXTURES, 'qpsk-clean-reference.csv'), join(out, 'qpsk-clean-reference.csv'));
    const before = readFileSync(data, 'utf8');
    const bad = await runMain(['analyze', data, '--report', data]);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/report file/);
    expect(readFileSync(data, 'utf8')).toBe(before);
  });

  it('exits 2 naming the file, line and column of a broken descriptor', async () => {
    const dir = copyFixture('qpsk-clean');
    const text =
      '{\n  "sampleRate": 64e9,\n  "symbolRate": "fast",\n  "modulation": "qpsk",\n  "reference": "qpsk-clean-reference.csv"\n}\n';
    writeFileSync(join(dir, 'qpsk-clean.json'), text);
    const r = await runMain(['analyze', join(dir, 'qpsk-clean.csv'), '--json']);
    expect(r.code).toBe(2);
    expect(r.stdout).toBe('');
    // Line 3, column of the value "fast" (1-based).
    const column = text.split('\n')[2].indexOf('"fast"') + 1;
    expect(r.stderr).toContain(`${join(dir, 'qpsk-clean.json')}:3:${column}: field 'symbolRate'`);
  });

  it('exits 1 with the reason when a 16QAM capture is analysed as QPSK', async () => {
    // A 16QAM signal labelled QPSK, with a QPSK reference made of the signs of the 16QAM
    // symbols (so that the reference itself is a valid QPSK pattern): the quadrants are all
    // right, but the extra points count as noise of an SNR at which Gray QPSK fails far more
    // often (Cho & Yoon 2002): the data do not fit QPSK.
    const dir = tempDir();
    copyFileSync(join(FIXTURES, '16qam-scope.csv'), join(dir, 'relabelled.csv'));
    const lines = readFileSync(join(FIXTURES, '16qam-scope-reference.csv'), 'utf8').split('\n');
    const signs = lines.map((l) =>
      l === '' || l.startsWith('#') || l.startsWith('x_re')
        ? l
        : l
            .split(',')
            .map((v) => (Number(v) > 0 ? 1 : -1))
            .join(','),
    );
    writeFileSync(join(dir, 'relabelled-reference.csv'), signs.join('\n'));
    const descriptor = JSON.parse(readFileSync(join(FIXTURES, '16qam-scope.json'), 'utf8'));
    writeFileSync(
      join(dir, 'relabelled.json'),
      JSON.stringify({ ...descriptor, modulation: 'qpsk', reference: 'relabelled-reference.csv' }),
    );
    const r = await runMain(['analyze', join(dir, 'relabelled.json'), '--json']);
    expect(r.code).toBe(1);
    const j = JSON.parse(r.stdout);
    expect(j.ok).toBe(false);
    expect(j.ber).toBeNull();
    expect(j.failure.check).toBe('modulation');
    expect(r.stderr).toMatch(/analysis failed: the recovered symbols do not fit qpsk: BER at most/);
    const text = await runMain(['analyze', join(dir, 'relabelled.json')]);
    expect(text.code).toBe(1);
    expect(text.stdout).toMatch(/analysis failed \(modulation\)/);
  });

  it('exits 2 when --modulation contradicts the reference (64qam for a 16QAM capture)', async () => {
    // The reference symbols are checked against the modulation before any analysis:
    // 16QAM points are not 64QAM points at any scale, so this is bad input, not a failed analysis.
    const r = await runMain(['analyze', join(FIXTURES, '16qam-scope.json'), '--modulation', '64qam']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(
      /16qam-scope-reference\.csv: reference symbol 1, polarization x: expected a point of the 64qam constellation/,
    );
    expect(r.stderr).toMatch(/is the modulation right\?/);
  });

  it('exits 2 on bad usage', async () => {
    expect((await runMain(['analyze'])).code).toBe(2);
    expect((await runMain(['analyze', join(FIXTURES, 'qpsk-clean.json'), '--modulation', '8psk'])).code).toBe(2);
    expect((await runMain(['analyze', '--help'])).stdout).toMatch(/--pipeline FILE/);
  });

  it('runs the algorithms chosen by name, from an option or a pipeline file, and records them', async () => {
    const fixture = join(FIXTURES, '16qam-scope.json');
    const chosen = await runMain([
      'analyze',
      fixture,
      '--phase-recovery',
      'viterbi-viterbi',
      '--equalizer-rule',
      'cma',
      '--json',
    ]);
    expect(chosen.code, chosen.stderr).toBe(0);
    const j = JSON.parse(chosen.stdout);
    expect(j.record.pipeline.options).toMatchObject({ phaseRecovery: 'viterbi-viterbi', equalizerRule: 'cma' });
    const slot = (name: string) => j.record.pipeline.stages.find((s: { slot: string }) => s.slot === name);
    expect(slot('phase').stage).toBe('viterbi-viterbi');
    expect(slot('equalizer').options.blindRule).toBe('cma');
    // 16QAM at its fixture's SNR through either chain: the BER stays near the default chain's.
    const plain = JSON.parse((await runMain(['analyze', fixture, '--json'])).stdout);
    expect(slot('phase').stage).not.toBe(plain.record.pipeline.stages.find((s: { slot: string }) => s.slot === 'phase').stage);
    expect(j.ber).toBeLessThan(Math.max(3 * plain.ber, 1e-3));
    // The same choice from a pipeline file; the command's option wins over the file.
    const dir = tempDir();
    writeFileSync(
      join(dir, 'p.json'),
      JSON.stringify({ receiver: { orthogonalization: 'lowdin', phaseRecovery: 'viterbi-viterbi' } }),
    );
    const piped = await runMain([
      'analyze',
      fixture,
      '--pipeline',
      join(dir, 'p.json'),
      '--phase-recovery',
      'blind-phase-search',
      '--json',
    ]);
    const p = JSON.parse(piped.stdout);
    expect(p.record.pipeline.options).toMatchObject({ orthogonalization: 'lowdin', phaseRecovery: 'blind-phase-search' });
    const wrong = await runMain(['analyze', fixture, '--equalizer-rule', 'lms']);
    expect(wrong.code).toBe(2);
    expect(wrong.stderr).toMatch(/--equalizer-rule expected one of cma, rde, received 'lms'/);
  });
});
