/**
 * Intradyne I/O: the only package that touches files. Capture and reference
 * writers, atomic output, simulated scenarios, and the `intradyne` command.
 * @packageDocumentation
 */

export { main } from './cli/main.js';
export { type RunScenarioOptions, runScenario, type WrittenCapture } from './scenarios/run.js';
export { BUILT_IN_SCENARIOS, builtInScenario, mergeOptions, type Scenario } from './scenarios/scenario.js';
export { type AtomicWriteOptions, OutputExistsError, writeFileAtomic } from './write/atomic.js';
export { type CaptureCsvOptions, writeCaptureCsv, writeJsonAtomic, writeReferenceCsv } from './write/csv.js';
