import type { ComplexArray, Constellation } from '@intradyne/core';
import type { PolAlignment } from '../sync/synchronize.js';

/** One polarization's symbols as measured, from `skipSymbols` on: N = Nr − skipSymbols of each. */
export interface AlignedSymbols {
  /** Received symbols with rotation and conjugation undone, divided by the gain (unit constellation scale). */
  readonly received: ComplexArray;
  /** The transmitted points they are compared with. */
  readonly reference: ComplexArray;
  /** The transmitted labels. */
  readonly labels: Uint8Array;
}

/**
 * Aligns received symbols with the reference into caller-provided arrays:
 * undoes the rotation and conjugation, divides by `gain`, and pairs each
 * with its transmitted point and label. rx[from + i] is received symbol
 * `first + from + i` of the stream, which carries reference symbol
 * (first + from + i − delay) mod Nt; `count` of them are written to
 * out.received, out.reference and out.labels from index 0.
 * @param labels the reference's labels, Nt per polarization
 */
export function alignInto(
  c: Constellation,
  rx: ComplexArray,
  first: number,
  from: number,
  count: number,
  labels: Readonly<Record<'x' | 'y', Uint8Array>>,
  a: PolAlignment,
  gain: number,
  out: AlignedSymbols,
): void {
  const refLabels = labels[a.source];
  const nt = refLabels.length;
  const z = out.received;
  const ref = out.reference;
  const sent = out.labels;
  const k = a.quarterTurns;
  const conj = a.conjugated ? -1 : 1;
  let j = (((first + from - a.delay) % nt) + nt) % nt;
  for (let i = 0; i < count; i++) {
    const re = rx[2 * (from + i)];
    const im = rx[2 * (from + i) + 1];
    // Undo e^(jkπ/2), then the conjugation: r' = conj?(e^(−jkπ/2)·r).
    let ur = re;
    let ui = im;
    if (k === 1) {
      ur = im;
      ui = -re;
    } else if (k === 2) {
      ur = -re;
      ui = -im;
    } else if (k === 3) {
      ur = -im;
      ui = re;
    }
    z[2 * i] = ur;
    z[2 * i + 1] = conj * ui;
    const label = refLabels[j];
    sent[i] = label;
    ref[2 * i] = c.points[2 * label];
    ref[2 * i + 1] = c.points[2 * label + 1];
    if (++j === nt) j = 0;
  }
  if (gain !== 1) for (let i = 0; i < 2 * count; i++) z[i] /= gain;
}

/** Arrays for `symbols` aligned symbols. */
export function alignedArrays(symbols: number): AlignedSymbols {
  return {
    received: new Float64Array(2 * symbols) as ComplexArray,
    reference: new Float64Array(2 * symbols) as ComplexArray,
    labels: new Uint8Array(symbols),
  };
}

/** The first `count` symbols of aligned arrays, as views. */
export function alignedView(a: AlignedSymbols, count: number): AlignedSymbols {
  return {
    received: a.received.subarray(0, 2 * count) as ComplexArray,
    reference: a.reference.subarray(0, 2 * count) as ComplexArray,
    labels: a.labels.subarray(0, count),
  };
}
