import { existsSync } from 'node:fs';
import { OptionError } from '@intradyne/core';
import { parseJsonFile } from '../capture/json-positions.js';
import { LIMITS } from '../capture/limits.js';
import { readInputText } from '../load/open-file.js';
import { runScenario } from '../scenarios/run.js';
import { BUILT_IN_SCENARIOS, builtInScenario, type Scenario } from '../scenarios/scenario.js';
import { parseCommandArgs, positiveInteger } from './args.js';
import { UsageError } from './errors.js';

export const SIMULATE_HELP = `intradyne simulate SCENARIO --out DIR [options]

Writes simulated captures: for each capture of the scenario a CSV of the four
channels (<name>.csv), its descriptor (<name>.json) and the transmitted
symbols (<name>-reference.csv).

SCENARIO is a built-in name or a scenario JSON file:
${BUILT_IN_SCENARIOS.map((s) => `  ${s.name.padEnd(12)} ${s.description}`).join('\n')}

Options:
  --out DIR        folder to write into (created if missing)
  --symbols N      symbols per capture, overriding the scenario (at most
                   ${LIMITS.maxSimulatedSamples} samples per channel in all)
  --overwrite      replace files that already exist (default: refuse)
  --json           print what was written as one JSON object
  -h, --help       this text
`;

/** Loads a scenario from a built-in name or a JSON file. */
export function loadScenario(spec: string): Scenario {
  const builtIn = builtInScenario(spec);
  if (builtIn) return builtIn;
  if (!existsSync(spec)) {
    throw new UsageError(
      `intradyne simulate: '${spec}' is neither a built-in scenario (${BUILT_IN_SCENARIOS.map((s) => s.name).join(', ')}) nor a file`,
    );
  }
  const doc = parseJsonFile(readInputText(spec, 'scenario'), spec);
  const s = doc as Partial<Scenario>;
  if (typeof s !== 'object' || s === null || typeof s.name !== 'string')
    throw new UsageError(`${spec}: expected an object with a string 'name'`);
  if (s.base !== undefined && (typeof s.base !== 'object' || s.base === null || Array.isArray(s.base)))
    throw new UsageError(`${spec}: expected 'base' to be an object of simulator options`);
  if (!Array.isArray(s.captures) || s.captures.length === 0)
    throw new UsageError(`${spec}: expected a non-empty array 'captures'`);
  const files = new Set<string>();
  for (const [i, c] of s.captures.entries()) {
    if (typeof c?.name !== 'string' || !/^[A-Za-z0-9._-]+$/.test(c.name)) {
      throw new UsageError(
        `${spec}: captures[${i}].name expected letters, digits, '.', '_' or '-', received ${JSON.stringify(c?.name)}`,
      );
    }
    // Each capture writes NAME.csv, NAME.json and NAME-reference.csv: no two captures may share one.
    for (const f of [c.name, `${c.name}-reference`])
      if (files.has(f))
        throw new UsageError(
          `${spec}: captures[${i}].name expected a name whose files no other capture writes, received '${c.name}'`,
        );
    files.add(c.name).add(`${c.name}-reference`);
  }
  return { description: '', base: {}, ...s } as Scenario;
}

export function simulateCommand(argv: readonly string[], out: (s: string) => void, err: (s: string) => void): number {
  const { values, positionals } = parseCommandArgs('simulate', argv, {
    out: { type: 'string' },
    symbols: { type: 'string' },
    overwrite: { type: 'boolean' },
    json: { type: 'boolean' },
  });
  if (values.help) {
    out(SIMULATE_HELP);
    return 0;
  }
  if (positionals.length !== 1)
    throw new UsageError("intradyne simulate: expected one SCENARIO (see 'intradyne simulate --help')");
  if (!values.out) throw new UsageError('intradyne simulate: --out DIR is required');
  const scenario = loadScenario(positionals[0]);
  const symbols = positiveInteger('simulate', 'symbols', values.symbols as string | undefined);
  try {
    const written = runScenario(scenario, values.out as string, {
      overwrite: values.overwrite === true,
      symbols,
      onCapture: (w, i, n) => err(`simulated ${i + 1}/${n}: ${w.name}\n`),
    });
    if (values.json) {
      out(
        `${JSON.stringify({ scenario: scenario.name, captures: written.map((w) => ({ name: w.name, data: w.data, descriptor: w.descriptor, reference: w.reference })) })}\n`,
      );
    } else {
      out(`Wrote ${written.length} captures of scenario '${scenario.name}' to ${values.out}\n`);
      for (const w of written) out(`  ${w.name}: ${w.data}, ${w.descriptor}, ${w.reference}\n`);
    }
  } catch (e) {
    if (e instanceof OptionError) throw new UsageError(`scenario '${scenario.name}': ${e.message}`);
    throw e;
  }
  return 0;
}
