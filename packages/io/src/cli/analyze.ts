import { join } from 'node:path';
import { ALGORITHMS, MODULATION_RULE, parseModulation, SHAPED_FAMILIES } from '@intradyne/core';
import { type AnalysisSettings, analyzeOpenCapture, type FileAnalysis } from '../analysis/analyze-file.js';
import { readPipelineFile } from '../analysis/pipeline-file.js';
import { stageSymbolsArrowStreaming } from '../arrow/arrow-write.js';
import { openCapture } from '../capture/capture.js';
import { LIMITS, rateProblem } from '../capture/limits.js';
import { analysisToJson } from '../figures/analysis-json.js';
import { presentedLinewidth } from '../figures/figure-schema.js';
import { BOUND_NOTE, figureRows, textNumber } from '../figures/figure-table.js';
import { analysisReport } from '../report/analysis-report.js';
import { checkReportPath, stageReport } from '../report/write-report.js';
import {
  checkOutputFile,
  checkOutputFolder,
  commitTogether,
  prepareOutputFolder,
  type StagedFile,
  stageFile,
} from '../write/atomic.js';
import { parseCommandArgs, positiveInteger, positiveNumber } from './args.js';
import { table } from './demo.js';
import { EXIT, UsageError } from './errors.js';

export const ANALYZE_HELP = `intradyne analyze CAPTURE [options]

Runs the default receiver on one capture (its data file or its descriptor)
and measures it against its reference: BER with its 95 % interval, SER, EVM,
SNR, Q, GMI, NGMI, MI, per polarization and in total, with what every stage
found (dispersion, clock, equalizer, frequency offset, slips).

Options (each overrides the descriptor):
  --modulation M        qpsk, 8qam, 16qam, 32qam, 64qam, 128qam, 256qam, or a shaped
                        format with its parameter: ps-64qam:entropy=4.5, ps-256qam:nu=0.01
                        (ps-64qam alone takes the descriptor's shaping)
  --symbol-rate BD      symbol rate, Bd
  --sample-rate SAS     scope sample rate, Sa/s (at most 1e13, and 256 samples per symbol)
  --roll-off B          transmitter roll-off
  --dispersion PSNM     accumulated dispersion to remove, ps/nm
  --no-blind-dispersion remove no dispersion when none is stated (default: estimate it)
  --skip N              leading recovered symbols left out (default 2048)
  --phase-recovery NAME ${ALGORITHMS.phaseRecovery.join(' or ')} (default: the first for
                        QPSK, the second for QAM)
  --equalizer-rule NAME the equalizer's blind rule: ${ALGORITHMS.equalizerRule.join(' or ')} (default: CMA for QPSK,
                        RDE for QAM)
  --orthogonalization NAME
                        IQ orthogonalization: ${ALGORITHMS.orthogonalization.join(' or ')} (default gsop)
  --data-aided          train the equalizer on the transmitted symbols after a blind
                        pass has aligned them (the best case to compare blind DSP with;
                        shaped formats are always analysed so, placed against the
                        reference without a blind pass)
  --pipeline FILE       JSON with "receiver" (stage options) and "analysis" settings
  --out DIR             also write <name>.analysis.json and <name>.symbols.arrow there
                        (created when missing; the two files are written both or neither)
  --report FILE         also write a self-contained HTML report there (constellation,
                        equalizer, carrier phase, input spectrum, every figure); its
                        folder must exist
  --json                print one JSON object on stdout
  -h, --help            this text

Exit codes: 0 done, 1 the analysis failed (the reason is printed), 2 bad usage or input.
`;

/**
 * Parses the options that override a descriptor or configure the receiver
 * (shared with sweep), each checked on its own here (a value that does not
 * fit a capture's descriptor is named when the capture is opened).
 * @throws UsageError naming the option, what was expected and what was received
 */
export function analysisSettingsFrom(command: string, values: Record<string, string | boolean | undefined>): AnalysisSettings {
  const modulation = values.modulation as string | undefined;
  // A shaped family alone ('ps-64qam') takes its parameter from the descriptor's shaping field.
  if (modulation !== undefined && !(SHAPED_FAMILIES as readonly string[]).includes(modulation.toLowerCase())) {
    try {
      parseModulation(modulation);
    } catch (e) {
      if (!(e instanceof RangeError)) throw e;
      throw new UsageError(`intradyne ${command}: --modulation expected ${MODULATION_RULE}, received '${modulation}'`);
    }
  }
  const dispersion = values.dispersion as string | undefined;
  let dispersionPsPerNm: number | undefined;
  if (dispersion !== undefined) {
    dispersionPsPerNm = Number(dispersion);
    if (dispersion.trim() === '' || !Number.isFinite(dispersionPsPerNm))
      throw new UsageError(`intradyne ${command}: --dispersion expected a number of ps/nm, received '${dispersion}'`);
  }
  const rollOff = positiveNumber(command, 'roll-off', values['roll-off'] as string | undefined);
  if (rollOff !== undefined && rollOff > 1)
    throw new UsageError(`intradyne ${command}: --roll-off expected a roll-off in (0, 1], received '${values['roll-off']}'`);
  const symbolRate = positiveNumber(command, 'symbol-rate', values['symbol-rate'] as string | undefined);
  const sampleRate = positiveNumber(command, 'sample-rate', values['sample-rate'] as string | undefined);
  for (const [option, v] of [
    ['symbol-rate', symbolRate],
    ['sample-rate', sampleRate],
  ] as const) {
    if (v !== undefined && v > LIMITS.maxSampleRate)
      throw new UsageError(
        `intradyne ${command}: --${option} expected at most ${LIMITS.maxSampleRate}, received '${values[option]}'`,
      );
  }
  if (sampleRate !== undefined && symbolRate !== undefined) {
    const problem = rateProblem(sampleRate, symbolRate);
    if (problem !== null)
      throw new UsageError(`intradyne ${command}: --sample-rate expected ${problem}, received '${values['sample-rate']}'`);
  }
  const overrides: Record<string, unknown> = {
    modulation,
    symbolRate,
    sampleRate,
    rollOff,
    dispersionPsPerNm,
  };
  const pipeline = values.pipeline ? readPipelineFile(values.pipeline as string) : {};
  // Algorithms chosen by name: an option wins over the pipeline file.
  const algorithms: Record<string, string> = {};
  for (const [option, kind] of [
    ['phase-recovery', 'phaseRecovery'],
    ['equalizer-rule', 'equalizerRule'],
    ['orthogonalization', 'orthogonalization'],
  ] as const) {
    const v = values[option] as string | undefined;
    if (v === undefined) continue;
    const names: readonly string[] = ALGORITHMS[kind];
    if (!names.includes(v))
      throw new UsageError(`intradyne ${command}: --${option} expected one of ${names.join(', ')}, received '${v}'`);
    algorithms[kind] = v;
  }
  const skip = values.skip !== undefined ? positiveInteger(command, 'skip', values.skip as string) : undefined;
  return {
    overrides,
    estimateDispersion: values['no-blind-dispersion'] !== true,
    receiver: { ...pipeline.receiver, ...algorithms },
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
  'phase-recovery': { type: 'string' },
  'equalizer-rule': { type: 'string' },
  orthogonalization: { type: 'string' },
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
  const dir = values.out as string | undefined;
  const reportPath = values.report as string | undefined;
  // The output paths are checked before the analysis, so that a mistyped path costs nothing.
  if (dir !== undefined) checkOutputFolder(dir);
  if (reportPath !== undefined) checkOutputFile(reportPath, 'report', { overwrite: true });
  err(`analyzing ${positionals[0]}\n`);
  const analysisSettings = {
    ...settings,
    analysis: { ...settings.analysis, plotData: reportPath !== undefined },
  };
  const capture = openCapture(positionals[0], settings.overrides ?? {});
  const inputs = [capture.dataPath, capture.referencePath, ...(capture.descriptorPath ? [capture.descriptorPath] : [])];
  if (reportPath !== undefined) checkReportPath(reportPath, inputs);
  if (dir !== undefined) prepareOutputFolder(dir);
  const staged: StagedFile[] = [];
  let analysis: FileAnalysis;
  let json: Record<string, unknown>;
  try {
    if (dir === undefined) analysis = analyzeOpenCapture(capture, analysisSettings);
    else {
      // The recovered symbols go to a staged file as the chain delivers them: memory stays flat with the capture.
      const symbols = stageSymbolsArrowStreaming(
        join(dir, `${capture.name}.symbols.arrow`),
        (add) =>
          analyzeOpenCapture(capture, {
            ...analysisSettings,
            analysis: { ...analysisSettings.analysis, onSymbols: add },
          }),
        { overwrite: true },
      );
      staged.push(symbols.staged);
      analysis = symbols.result;
    }
    json = analysisToJson(analysis);
    // Every output is complete on disk before any is put in place: all of them or none.
    const jsonText = `${JSON.stringify(json, null, 2)}\n`;
    const html = reportPath !== undefined ? analysisReport(analysis) : undefined;
    commitTogether([
      ...staged.map((s) => () => s),
      ...(dir !== undefined
        ? [() => stageFile(join(dir, `${capture.name}.analysis.json`), (append) => append(jsonText), { overwrite: true })]
        : []),
      ...(reportPath !== undefined && html !== undefined ? [() => stageReport(reportPath, html, inputs)] : []),
    ]);
  } catch (e) {
    // Whatever failed, no temporary file stays behind (a committed file is not touched).
    for (const s of staged) s.discard();
    throw e;
  }
  for (const w of capture.warnings) err(`warning: ${w}\n`);
  if (reportPath !== undefined) err(`report: ${reportPath}\n`);
  if (values.json) out(`${JSON.stringify(json)}\n`);
  else out(summary(analysis));
  if (!analysis.result.ok) {
    if (values.json) err(`analysis failed: ${analysis.result.failure?.reason}\n`);
    return EXIT.analysisFailed;
  }
  return EXIT.done;
}

const fmt = textNumber;

/** The human-readable summary of one analysis. */
export function summary({ capture, result }: FileAnalysis): string {
  const lines = [`${capture.name}: ${capture.modulation} at ${capture.symbolRate / 1e9} GBd, ${capture.sampleRate / 1e9} GSa/s`];
  const m = result.measurement;
  if (!result.ok || m === null) {
    lines.push(`analysis failed (${result.failure?.check}): ${result.failure?.reason}`);
    return `${lines.join('\n')}\n`;
  }
  const { headings, rows } = figureRows(m, fmt);
  lines.push(table(headings, rows).trimEnd());
  const cd = result.diagnostics.dispersion;
  const lw = presentedLinewidth(result.linewidthHz);
  const linewidth = lw.linewidthBelowResolution
    ? "linewidth below the estimate's resolution"
    : `linewidth ${fmt(lw.linewidthHz === null ? null : lw.linewidthHz / 1e3, 0)} kHz`;
  if (m.berIsUpperBound) lines.push(BOUND_NOTE);
  lines.push(
    `frequency offset ${fmt(result.freqOffsetHz / 1e6, 1)} MHz, ${linewidth}, ` +
      `cycle slips ${result.cycleSlips.count}, dispersion ${fmt(cd.dispersionPsPerNm, 0)} ps/nm${cd.estimated ? ' (estimated)' : ''}, ` +
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
