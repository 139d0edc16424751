// Prints one plain closing line for the test run, read by CI:
//   tests: N passed, N failed, N skipped
import { readFileSync } from 'node:fs';

const report = JSON.parse(readFileSync(new URL('../.tmp/vitest-report.json', import.meta.url), 'utf8'));
const skipped = report.numPendingTests + report.numTodoTests;
console.log(`tests: ${report.numPassedTests} passed, ${report.numFailedTests} failed, ${skipped} skipped`);
process.exitCode = report.numFailedTests > 0 || report.numTotalTests === 0 ? 1 : 0;
