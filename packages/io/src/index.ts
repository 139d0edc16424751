/**
 * Intradyne I/O: the only package that touches files. Capture and reference
 * writers, atomic output, simulated scenarios, the HTML reports, and the
 * `intradyne` command.
 * @module @intradyne/io
 */

export { type AnalysisSettings, analyzeFile, type FileAnalysis } from './analysis/analyze-file.js';
export { type PipelineSettings, readPipelineFile } from './analysis/pipeline-file.js';
export {
  type ArrowCaptureOptions,
  arrowStreamComplete,
  loadArrowCapture,
  loadReferenceArrow,
  readArrowCapture,
  readArrowCaptureAsync,
  readArrowMetadata,
} from './arrow/arrow-capture.js';
export {
  type ArrowWriteOptions,
  type ResultRow,
  type ResultsArrowOptions,
  type ResultsColumnKind,
  resultsArrowBytes,
  stageSymbolsArrowStreaming,
  writeCaptureArrow,
  writeResultsArrow,
  writeSymbolsArrow,
  writeSymbolsArrowStreaming,
} from './arrow/arrow-write.js';
export {
  type CaptureDescription,
  DATA_EXTENSIONS,
  descriptorPathFor,
  listCaptures,
  loadReference,
  loadReferenceLabels,
  openCapture,
  resolveDataPath,
} from './capture/capture.js';
export {
  type CaptureDescriptor,
  DESCRIPTOR_DEFAULTS,
  DESCRIPTOR_FIELDS,
  parseDescriptor,
  readDescriptor,
} from './capture/descriptor.js';
export { CAPTURE_FORMATS, type CaptureFormat, formatOfExtension, type ReadOptions } from './capture/formats.js';
export { type PositionedJson, parseJsonWithPositions } from './capture/json-positions.js';
export { LIMITS, maxDispersionPsPerNm } from './capture/limits.js';
export {
  checkReferenceConstellation,
  loadReferenceCsv,
  loadReferenceLabelsCsv,
  MIN_REFERENCE_SYMBOLS,
  REFERENCE_POINT_TOLERANCE,
} from './capture/reference.js';
export { type InspectReport, inspectCapture } from './cli/inspect.js';
export { main } from './cli/main.js';
export { inputFailure, outputFailure } from './errors/file-system.js';
export { InputError, type InputLocation } from './errors/input-error.js';
export { OutputError } from './errors/output-error.js';
export { UsageError } from './errors/usage-error.js';
export { ANALYSIS_JSON_VERSION, analysisJsonSchema, analysisToJson } from './figures/analysis-json.js';
export {
  ANALYSIS_FIGURES,
  CAPTURE_FIGURES,
  type ColumnKind,
  type ErrorCountsJson,
  type Figure,
  type FigureKind,
  type FigureValue,
  POLARIZATION_FIGURES,
  type PolarizationOf,
  type PresentedLinewidth,
  presentedLinewidth,
  QUALITY_FIGURES,
  RESULT_COLUMN_SPECS,
  type ResultColumnSpec,
} from './figures/figure-schema.js';
export { FIGURE_COLUMNS, type FigureColumn, type NumberText } from './figures/figure-table.js';
export {
  type CaptureColumn,
  type ChannelFiles,
  type CsvCaptureOptions,
  loadCsvCapture,
  readCsvCapture,
  readCsvCaptureAsync,
  readCsvCaptureBytes,
  readCsvCaptureFiles,
} from './load/csv-capture.js';
export { parseDecimal } from './load/decimal.js';
export { openInput, readInputText } from './load/open-file.js';
export { SAMPLE_RATE_TOLERANCE, TIME_STEP_TOLERANCE } from './load/time-axis.js';
export { analysisReport } from './report/analysis-report.js';
export { type SweepReportContext, sweepReport } from './report/sweep-report.js';
export { writeReport } from './report/write-report.js';
export { type RunScenarioOptions, runScenario, type WrittenCapture } from './scenarios/run.js';
export { BUILT_IN_SCENARIOS, builtInScenario, mergeOptions, type Scenario } from './scenarios/scenario.js';
export { runSweepTask, type SweepOutcome, type SweepTask } from './sweep/analyze-task.js';
export { pipelineFingerprint, settingsFingerprint } from './sweep/fingerprint.js';
export { type FolderLock, LOCK_FILE, type LockHolder, lockFolder } from './sweep/folder-lock.js';
export { captureInputHash } from './sweep/input-hash.js';
export {
  entryProblem,
  inspectJournal,
  JOURNAL_FILE,
  type JournalEntry,
  type JournalReading,
  readJournal,
  SET_ASIDE_FILE,
  type SetAsideLine,
} from './sweep/journal.js';
export { type MergeReport, mergeShards } from './sweep/merge-shards.js';
export {
  BOOLEAN_COLUMNS,
  INTEGER_COLUMNS,
  RESULT_COLUMNS,
  rowProblem,
  type SweepRow,
  TEXT_COLUMNS,
} from './sweep/result-row.js';
export type { ResultsTableFiles } from './sweep/results-table.js';
export { defaultSweepOut, runSweep, type SweepOptions, type SweepReport } from './sweep/run-sweep.js';
export { inShard, type ShardSpec, shardOf } from './sweep/shard.js';
export {
  type PlacedRow,
  readShardRecord,
  SHARD_RECORD_FILE,
  SHARD_RECORD_FORMAT,
  type ShardRecord,
} from './sweep/shard-record.js';
export { type SlurmScriptOptions, slurmScript } from './sweep/slurm-script.js';
export { readManifest, type SweepCapture, type SweepInputs, sweepInputs } from './sweep/sweep-inputs.js';
export { type SweepOutputPaths, writeSweepOutputs } from './sweep/sweep-outputs.js';
export {
  type AtomicWriteOptions,
  checkOutputFile,
  commitTogether,
  OutputExistsError,
  prepareOutputFolder,
  type StagedFile,
  stageFile,
  writeFileAtomic,
} from './write/atomic.js';
export { type CaptureCsvOptions, writeCaptureCsv, writeJsonAtomic, writeReferenceCsv } from './write/csv.js';
