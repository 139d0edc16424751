import { mergeShards } from '../sweep/merge-shards.js';
import { parseCommandArgs } from './args.js';
import { EXIT, UsageError } from './errors.js';
import { printFailures } from './sweep.js';

export const MERGE_HELP = `intradyne merge RESULT_DIR [options]

Combines the shards of a sweep run with 'intradyne sweep … --shard K/N
--out RESULT_DIR' (each in RESULT_DIR/shard-K-of-N, finished when its
shard.json is there) into the table one sweep of all the captures gives:
RESULT_DIR/results.csv and RESULT_DIR/results.arrow, the same bytes.

It refuses, naming the folders at fault, when a shard is missing or did not
finish, when a shard is there twice, when shards were split differently
(another N), ran with different library versions or analysis settings, or
swept different inputs. Nothing is analysed; the shards are left as they are.

Options:
  --report FILE         also write the sweep's HTML report (plots and table)
  --json                print the summary and the rows as one JSON object
  -h, --help            this text

Exit codes: 0 merged and every capture analysed, 1 merged but some analysis
failed or some capture could not be read (see the table), 2 bad usage, or
shards that do not make one complete sweep.
`;

export function mergeCommand(argv: readonly string[], out: (s: string) => void): number {
  const { values, positionals } = parseCommandArgs('merge', argv, {
    json: { type: 'boolean' },
    report: { type: 'string' },
  });
  if (values.help) {
    out(MERGE_HELP);
    return EXIT.done;
  }
  if (positionals.length !== 1) throw new UsageError("intradyne merge: expected one RESULT_DIR (see 'intradyne merge --help')");
  const report = mergeShards(positionals[0], { report: values.report as string | undefined });
  if (values.json) {
    out(
      `${JSON.stringify({
        shards: report.shards,
        captures: report.captures,
        failed: report.failed,
        csv: report.csvPath,
        arrow: report.arrowPath,
        report: report.reportPath,
        rows: report.rows,
      })}\n`,
    );
  } else {
    out(
      `merged ${report.shards} shards: ${report.captures} captures, failed ${report.failed}\n` +
        `results: ${report.csvPath}, ${report.arrowPath}${report.reportPath ? `, report ${report.reportPath}` : ''}\n`,
    );
    printFailures(report.rows, out);
  }
  return report.failed > 0 ? EXIT.analysisFailed : EXIT.done;
}
