import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import {
  type AnalysisSettings,
  analysisToJson,
  analyzeFile,
  analyzeOpenCapture,
  type FileAnalysis,
  readPipelineFile,
} from '../analysis/analyze-file.js';
import { writeSymbolsArrowStreaming } from '../arrow/arrow-write.js';
import { openCapture } from '../capture/capture.js';
import { analysisReport } from '../report/analysis-report.js';
import { writeReport } from '../report/write-report.js';
import { writeJsonAtomic } from '../write/csv.js';
import { parseCommandArgs, positiveInteger, positiveNumber } from './args.js';
import { table } from './demo.js';
import { EXIT, UsageError } from './errors.js';

export const ANALYZE_HELP = `intradyne analyze CAPTURE [options]

Runs the default receiver on one capture (its data file or its descriptor)
and measures it against its reference: BER with its 95 % interval, SER, EVM,
SNR, Q, GMI, NGMI, MI, per polarization and in total, with what every stage
found (dispersion, clock, equalizer, frequency offset, slips).

Options (each overrides the descriptor):
  --modulation M        qpsk, 16qam or 64qam
  --symbol-rate BD      symbol rate, Bd
  --sample-rate SAS     scope sample rate, Sa/s
  --roll-off B          transmitter roll-off
  --dispersion PSNM     accumulated dispersion to remove, ps/nm
  --no-blind-dispersion remove no dispersion when none is stated (default: estimate it)
  --skip N              leading recovered symbols left out (default 2048)
  --data-aided          train the equalizer on the transmitted symbols after a blind
                        pass has aligned them (the best case to compare blind DSP with)
  --pipeline FILE       JSON with "receiver" (stage options) and "analysis" settings
  --out DIR             also write <name>.analysis.json and <name>.symbols.arrow there
  --report FILE         also write a self-contained HTML report there (constellation,
                        equalizer, carrier phase, input spectrum, every figure)
  --json                print one JSON object on stdout
  -h, --help            this text

Exit codes: 0 done, 1 the analysis failed (the reason is printed), 2 bad usage or input.
`;

/** Parses the options that override a descriptor or configure the receiver (shared with sweep). */
export function analysisSettingsFrom(command: string, values: Record<string, string | boolean | undefined>): AnalysisSettings {
  const modulation = values.modulation as string | undefined;
  const dispersion = values.dispersion as string | undefined;
  let dispersionPsPerNm: number | undefined;
  if (dispersion !== undefined) {
    dispersionPsPerNm = Number(dispersion);
    if (!Number.isFinite(dispersionPsPerNm))
      throw new UsageError(`intradyne ${command}: --dispersion expected a number of ps/nm, received '${dispersion}'`);
  }
  const rollOff = positiveNumber(command, 'roll-off', values['roll-off'] as string | undefined);
  const overrides: Record<string, unknown> = {
    modulation,
    symbolRate: positiveNumber(command, 'symbol-rate', values['symbol-rate'] as string | undefined),
    sampleRate: positiveNumber(command, 'sample-rate', values['sample-rate'] as string | undefined),
    rollOff,
    dispersionPsPerNm,
  };
  const pipeline = values.pipeline ? readPipelineFile(values.pipeline as string) : {};
  const skip = values.skip !== undefined ? positiveInteger(command, 'skip', values.skip as string) : undefined;
  return {
    overrides,
    estimateDispersion: values['no-blind-dispersion'] !== true,
    receiver: pipeline.receiver,
    analysis: {
      ...pipeline.analysis,
      ...(skip !== undefined ? { skipSymbols: skip } : {}),
      ...(values['data-aided'] === true ? { equalizerTraining: 'data-aided' as const } : {}),
    },
  };
}

export const ANALYSIS_OPTIONS = {
  modulation: { type: 'string' },
  'symbol-rate': { type: 'string' },
  'sample-rate': { type: 'string' },
  'roll-off': { type: 'string' },
  dispersion: { type: 'string' },
  'no-blind-dispersion': { type: 'boolean' },
  skip: { type: 'string' },
  'data-aided': { type: 'boolean' },
  pipeline: { type: 'string' },
} as const;

export function analyzeCommand(argv: readonly string[], out: (s: string) => void, err: (s: string) => void): number {
  const { values, positionals } = parseCommandArgs('analyze', argv, {
    ...ANALYSIS_OPTIONS,
    out: { type: 'string' },
    report: { type: 'string' },
    json: { type: 'boolean' },
  });
  if (values.help) {
    out(ANALYZE_HELP);
    return EXIT.done;
  }
  if (positionals.length !== 1) throw new UsageError("intradyne analyze: expected one CAPTURE (see 'intradyne analyze --help')");
  const settings = analysisSettingsFrom('analyze', values);
  err(`analyzing ${positionals[0]}\n`);
  const dir = values.out as string | undefined;
  const analysisSettings = {
    ...settings,
    analysis: { ...settings.analysis, plotData: values.report !== undefined },
  };
  let analysis: FileAnalysis;
  if (dir === undefined) analysis = analyzeFile(positionals[0], analysisSettings);
  else {
    // The recovered symbols go to the file as the chain delivers them: memory stays flat with the capture.
    const capture = openCapture(positionals[0], settings.overrides ?? {});
    mkdirSync(dir, { recursive: true });
    analysis = writeSymbolsArrowStreaming(
      join(dir, `${capture.name}.symbols.arrow`),
      (add) =>
        analyzeOpenCapture(capture, {
          ...analysisSettings,
          analysis: { ...analysisSettings.analysis, onSymbols: add },
        }),
      { overwrite: true },
    );
  }
  const json = analysisToJson(analysis);
  if (dir !== undefined) writeJsonAtomic(join(dir, `${analysis.capture.name}.analysis.json`), json, { overwrite: true });
  if (values.report) {
    const c = analysis.capture;
    const inputs = [c.dataPath, c.referencePath, ...(c.descriptorPath ? [c.descriptorPath] : [])];
    writeReport(values.report as string, analysisReport(analysis), inputs);
    err(`report: ${values.report}\n`);
  }
  if (values.json) out(`${JSON.stringify(json)}\n`);
  else out(summary(analysis));
  if (!analysis.result.ok) {
    if (values.json) err(`analysis failed: ${analysis.result.failure?.reason}\n`);
    return EXIT.analysisFailed;
  }
  return EXIT.done;
}

const fmt = (v: number | null | undefined, digits = 3): string =>
  v === null || v === undefined || !Number.isFinite(v)
    ? '–'
    : Math.abs(v) < 1e-2 && v !== 0
      ? v.toExponential(2)
      : v.toFixed(digits);

/** The human-readable summary of one analysis. */
export function summary({ capture, result }: FileAnalysis): string {
  const lines = [`${capture.name}: ${capture.modulation} at ${capture.symbolRate / 1e9} GBd, ${capture.sampleRate / 1e9} GSa/s`];
  if (!result.ok) {
    lines.push(`analysis failed (${result.failure?.check}): ${result.failure?.reason}`);
    return `${lines.join('\n')}\n`;
  }
  const m = result.measurement!;
  const row = (label: string, f: typeof m | typeof m.perPol.x) => [
    label,
    `${fmt(f.ber)}${f.berIsUpperBound ? ' (bound)' : ''}`,
    `${fmt(f.berCi95[0])} – ${fmt(f.berCi95[1])}`,
    `${f.bitErrors}/${f.bits}`,
    fmt(100 * f.evmRms, 2),
    fmt(f.snrDb, 2),
    fmt(f.qDb, 2),
    fmt(f.gmi, 3),
    fmt(f.ngmi, 4),
  ];
  lines.push(
    table(
      ['', 'BER', '95 % interval', 'errors/bits', 'EVM %', 'SNR dB', 'Q dB', 'GMI b', 'NGMI'],
      [row('total', m), row('x', m.perPol.x), row('y', m.perPol.y)],
    ).trimEnd(),
  );
  const cd = result.diagnostics.dispersion as { dispersionPsPerNm?: number; estimated?: boolean } | null;
  lines.push(
    `frequency offset ${fmt(result.freqOffsetHz / 1e6, 1)} MHz, linewidth ${fmt(result.linewidthHz / 1e3, 0)} kHz, ` +
      `cycle slips ${result.cycleSlips.count}, dispersion ${fmt(cd?.dispersionPsPerNm, 0)} ps/nm${cd?.estimated ? ' (estimated)' : ''}, ` +
      `penalty against theory ${fmt(result.implementationPenaltyDb, 2)} dB`,
  );
  const turned = m.slipCorrection.turnedBlocks.x + m.slipCorrection.turnedBlocks.y;
  if (turned > 0) {
    const other = m.slipCorrection.mode === 'per-block' ? m.uncorrected : m.blockCorrected;
    lines.push(
      `slip correction ${m.slipCorrection.mode} (blocks of ${m.slipCorrection.blockSymbols} symbols, ${turned} turned): ` +
        `BER ${m.slipCorrection.mode === 'per-block' ? 'without' : 'with'} it ${fmt(other.ber)}, ${other.bitErrors} errors`,
    );
  }
  return `${lines.join('\n')}\n`;
}
