import { CHANNEL_NAMES, type ChannelSpectra } from '@intradyne/core';
import { linePlot } from './line-plot.js';
import type { Markup } from './svg.js';

/**
 * The one-sided Welch power spectral density of each input channel in
 * dB relative to the largest value of all four, against frequency in GHz;
 * the floor is cut at −80 dB so that one empty bin does not squash the rest.
 */
export function spectrumPlot(s: ChannelSpectra): Markup {
  let peak = 0;
  for (const c of CHANNEL_NAMES) for (const v of s.psd[c]) if (v > peak) peak = v;
  const ghz = Array.from(s.frequencyHz, (f) => f / 1e9);
  const db = (p: Float64Array) => Array.from(p, (v) => Math.max(-80, 10 * Math.log10(v / peak)));
  return linePlot({
    kind: 'spectrum',
    title: `Input power spectrum (Welch, ${(s.resolutionHz / 1e6).toFixed(0)} MHz bins, ${s.segments} segments)`,
    xAxis: { label: 'frequency (GHz)', domain: [0, s.sampleRate / 2e9] },
    yAxis: { label: 'power density (dB, 0 at the peak)' },
    series: CHANNEL_NAMES.map((c) => ({ name: c, x: ghz, y: db(s.psd[c]) })),
    legendCorner: 'bottom-left',
  });
}
