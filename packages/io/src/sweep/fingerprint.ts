import { createHash } from 'node:crypto';
import { LIBRARY_VERSION } from '@intradyne/core';
import type { AnalysisSettings } from '../analysis/analyze-file.js';

const sha256 = (text: string) => createHash('sha256').update(text).digest('hex');

/**
 * SHA-256 (hex) of the library version and the analysis settings of a sweep
 * (overrides, receiver and analysis options), known before any analysis.
 * With the input hash (which covers the descriptor) it fixes the pipeline a
 * capture is analysed with, so a re-run may skip a capture whose stored row
 * has both.
 * @example settingsFingerprint({ overrides: { modulation: '16qam' } }) // 64 hex digits
 */
export function settingsFingerprint(settings: AnalysisSettings): string {
  return sha256(JSON.stringify({ version: LIBRARY_VERSION, settings }, sortedKeys));
}

/**
 * SHA-256 (hex) of the library version and the chain as the analysis
 * described it (`record.pipeline`: every stage with every option): the
 * pipeline fingerprint of a results row.
 * @example pipelineFingerprint(LIBRARY_VERSION, result.record.pipeline) // 64 hex digits
 */
export function pipelineFingerprint(version: string, pipeline: unknown): string {
  return sha256(`${version}\n${JSON.stringify(pipeline)}`);
}

/** JSON.stringify replacer that writes object keys sorted, so equal settings give equal text. */
function sortedKeys(_key: string, value: unknown): unknown {
  if (value && typeof value === 'object' && !Array.isArray(value)) {
    const out: Record<string, unknown> = {};
    for (const k of Object.keys(value).sort()) out[k] = (value as Record<string, unknown>)[k];
    return out;
  }
  return value;
}
