import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

/**
 * A module of this package's build, for a worker thread's entry: `path`
 * (relative to `dist/`, e.g. `sweep/worker.js`) in the
 * built package. When this module runs from its TypeScript source (in the
 * tests), the built module of the same package is used, so the package must
 * be built.
 * @example new Worker(builtModule('sweep/worker.js'), { workerData });
 */
export function builtModule(path: string): URL {
  const beside = new URL(`../${path}`, import.meta.url);
  if (existsSync(fileURLToPath(beside))) return beside;
  return new URL(`../../dist/${path}`, import.meta.url);
}
