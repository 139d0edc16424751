// Typedoc (in the test command) fails on an undocumented export; this test
// adds what typedoc cannot check: every exported function and class of the
// four public entry points carries an @example in its documentation.
import { join } from 'node:path';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';
import { ROOT } from './guide-samples.js';

const ENTRY_POINTS = [
  'packages/core/src/index.ts',
  'packages/core/src/testing/index.ts',
  'packages/metrics/src/index.ts',
  'packages/io/src/index.ts',
];

function exportsWithoutExample(): string[] {
  const config = ts.getParsedCommandLineOfConfigFile(
    join(ROOT, 'tsconfig.docs.json'),
    {},
    {
      ...ts.sys,
      onUnRecoverableConfigFileDiagnostic: (d) => {
        throw new Error(ts.flattenDiagnosticMessageText(d.messageText, '\n'));
      },
    },
  );
  if (!config) throw new Error('tsconfig.docs.json: unreadable');
  const program = ts.createProgram({ rootNames: ENTRY_POINTS.map((e) => join(ROOT, e)), options: config.options });
  const checker = program.getTypeChecker();
  const missing: string[] = [];
  for (const entry of ENTRY_POINTS) {
    const source = program.getSourceFile(join(ROOT, entry));
    const module = source && checker.getSymbolAtLocation(source);
    if (!module) throw new Error(`${entry}: not a module`);
    for (const exported of checker.getExportsOfModule(module)) {
      const symbol = exported.flags & ts.SymbolFlags.Alias ? checker.getAliasedSymbol(exported) : exported;
      for (const decl of symbol.declarations ?? []) {
        if (!ts.isFunctionDeclaration(decl) && !ts.isClassDeclaration(decl)) continue;
        // Overloads: the example may sit on any of the signatures.
        const tags = (symbol.declarations ?? []).flatMap((d) => ts.getJSDocTags(d).map((t) => t.tagName.text));
        if (!tags.includes('example')) missing.push(`${entry}: ${symbol.name}`);
        break;
      }
    }
  }
  return [...new Set(missing)].sort();
}

describe('API reference', () => {
  it('gives every exported function and class an @example', () => {
    expect(exportsWithoutExample()).toEqual([]);
  });
});
