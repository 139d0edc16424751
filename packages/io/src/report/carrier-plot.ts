import type { CycleSlip, FrequencyEstimate, PhaseRecoveryDiagnostics } from '@intradyne/core';
import { linePlot } from './line-plot.js';
import type { Markup } from './svg.js';

/**
 * The recovered carrier phase of both polarizations against time (the
 * decimated trace: each point the mean over `every` symbols), with every
 * cycle slip marked where it happened. The frequency offset is removed
 * before this stage, so a steady slope here would be a residual offset.
 * @param slipsFrom the recovered-symbol index of slip position 0 (the leading symbols left out of the measurement)
 */
export function phasePlot(
  d: PhaseRecoveryDiagnostics,
  symbolRate: number,
  slips: { readonly x: readonly CycleSlip[]; readonly y: readonly CycleSlip[] },
  slipsFrom: number,
  freqOffsetHz: number,
): Markup {
  const t = d.phaseTrace;
  const us = Array.from(t.x, (_, i) => (((i + 0.5) * t.every) / symbolRate) * 1e6);
  const markers = (['x', 'y'] as const).flatMap((p) =>
    slips[p].map((s) => ({
      x: ((s.position + slipsFrom) / symbolRate) * 1e6,
      label: `${p} ${s.quadrants > 0 ? '+' : ''}${90 * s.quadrants}°`,
    })),
  );
  const offset = Number.isFinite(freqOffsetHz) ? `, offset ${(freqOffsetHz / 1e6).toFixed(1)} MHz removed` : '';
  return linePlot({
    kind: 'phase',
    title: `Recovered carrier phase${offset}`,
    xAxis: { label: 'time (µs)' },
    yAxis: { label: 'phase (rad)' },
    series: [
      { name: 'x', x: us, y: t.x },
      { name: 'y', x: us, y: t.y },
    ],
    markers,
  });
}

/**
 * The frequency-offset estimates of a tracking frequency stage against
 * time (one dot, `circle.estimate`, per span at its middle), the coarse
 * offset removed before the matched filter added back, in MHz.
 * @param coarseHz the coarse stage's estimate (0 when there is none)
 */
export function frequencyTrackPlot(track: readonly FrequencyEstimate[], symbolRate: number, coarseHz: number): Markup {
  return linePlot({
    kind: 'frequency',
    title: 'Frequency-offset estimates',
    xAxis: { label: 'time (µs)' },
    yAxis: { label: 'offset (MHz)' },
    series: [
      {
        name: 'estimate',
        x: track.map((e) => ((e.startSymbol + e.symbols / 2) / symbolRate) * 1e6),
        y: track.map((e) => (coarseHz + e.freqOffsetHz) / 1e6),
        dots: 'estimate',
      },
    ],
  });
}
