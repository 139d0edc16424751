import { constellation, type ModulationName, modulationFamily, snrToOsnrDb } from '@intradyne/core';
import { FEC_THRESHOLDS, normalizedGmi, theoryBer, theoryGmi } from '@intradyne/metrics';
import type { LegendEntry } from './axes.js';
import { type LineSeries, linePlot } from './line-plot.js';
import { niceDomain } from './scale.js';
import type { Markup } from './svg.js';
import { THEME } from './theme.js';

/** What the sweep plots need of a results row (SNR in dB, GMI per polarization in bits per symbol). */
export interface SweepPoint {
  readonly modulation: ModulationName;
  readonly symbolRate: number;
  readonly snrDb: number;
  readonly ber: number;
  readonly berLo: number;
  readonly berHi: number;
  readonly gmi: number;
  readonly ngmi: number;
  /** No bit error was counted: `ber` is then the upper end of the interval, not an estimate. */
  readonly errorFree: boolean;
}

/**
 * Points of the theory curves across the SNR axis: 120 for square QAM (closed
 * forms and per-axis integrals), 30 for cross QAM and 8QAM, whose theory
 * integrates over the plane (up to a second per point for 128QAM).
 */
const CURVE_POINTS = 120;
const PLANE_CURVE_POINTS = 30;
/** Gauss–Hermite nodes per axis of the plane integrals of a curve (16: within 1e-4 bit of 32 nodes above 0 dB). */
const PLANE_CURVE_NODES = 16;

function snrDomain(points: readonly SweepPoint[]): [number, number] {
  return niceDomain(
    points.map((p) => p.snrDb),
    0.08,
  );
}

/** The modulations present, by size, then (shaped formats) by entropy. */
function modulationsOf(points: readonly SweepPoint[]): ModulationName[] {
  const mods = [...new Set(points.map((p) => p.modulation))];
  const key = (m: ModulationName) => [constellation(m).order, constellation(m).shaped ? 1 : 0, constellation(m).entropy];
  return mods.sort((a, b) => {
    const [ka, kb] = [key(a), key(b)];
    return ka[0] - kb[0] || ka[1] - kb[1] || ka[2] - kb[2] || (a < b ? -1 : 1);
  });
}

/** The colour of the i-th modulation present (the palette repeats beyond its eight colours). */
function seriesColour(i: number): string {
  return THEME.series[i % THEME.series.length];
}

/**
 * A modulation as a legend shows it: 16QAM, 32QAM…; a shaped one with its
 * parameter, PS-64QAM H=4.5 or PS-256QAM ν=0.01.
 * @example modulationLabel('ps-64qam:entropy=4.5') // 'PS-64QAM H=4.5'
 */
export function modulationLabel(m: ModulationName): string {
  const family = modulationFamily(m).toUpperCase();
  if (family === m.toUpperCase()) return family;
  const [key, value] = m.slice(m.indexOf(':') + 1).split('=');
  return `${family} ${key === 'entropy' ? 'H' : 'ν'}=${value}`;
}

/**
 * A compact legend: one colour swatch per modulation, then the meaning of
 * each mark in ink (dot measured, ring no errors, dashed theory).
 */
function markLegend(mods: readonly ModulationName[], withBounds: boolean): LegendEntry[] {
  return [
    ...mods.map((m, i) => ({ label: modulationLabel(m), colour: seriesColour(i), kind: 'line' as const })),
    { label: 'measured', colour: THEME.ink, kind: 'dot' as const },
    ...(withBounds ? [{ label: 'no errors: upper bound', colour: THEME.ink, kind: 'ring' as const }] : []),
    { label: 'AWGN theory', colour: THEME.ink, kind: 'dash' as const },
  ];
}

function curve(
  domain: readonly [number, number],
  f: (snrDb: number) => number,
  count = CURVE_POINTS,
): { x: number[]; y: number[] } {
  const x = Array.from({ length: count }, (_, i) => domain[0] + ((domain[1] - domain[0]) * i) / (count - 1));
  return { x, y: x.map(f) };
}

/** Points of a modulation's theory curve. */
function curvePoints(m: ModulationName): number {
  return constellation(m).square ? CURVE_POINTS : PLANE_CURVE_POINTS;
}

/**
 * A second axis of OSNR in 0.1 nm when every point has the same symbol
 * rate: OSNR = SNR + 10·log10(p·Rs/(2·Bref)), p = 2 (Essiambre et al., JLT
 * 2010); the relation assumes the measured SNR is set by the optical noise.
 */
function osnrAxis(points: readonly SweepPoint[]): { label: string; shift: number } | undefined {
  const rates = new Set(points.map((p) => p.symbolRate));
  if (rates.size !== 1) return undefined;
  const rs = points[0].symbolRate;
  return {
    label: `OSNR (dB, 0.1 nm) that gives this SNR at ${(rs / 1e9).toFixed(rs % 1e9 === 0 ? 0 : 2)} GBd`,
    shift: snrToOsnrDb(0, { symbolRate: rs }),
  };
}

/**
 * Pre-FEC BER against the measured SNR on a log axis: one dot (`circle.point`,
 * open for a capture without errors, whose BER is its upper bound) and one error bar (its exact 95 % interval) per capture, the AWGN theory
 * curve of each modulation present (Cho & Yoon 2002), and the hard-decision
 * FEC threshold; OSNR along the top when the symbol rate is common.
 */
export function berPlot(points: readonly SweepPoint[]): Markup {
  const domain = snrDomain(points);
  const mods = modulationsOf(points);
  const series: LineSeries[] = [];
  mods.forEach((m, i) => {
    const counted = points.filter((p) => p.modulation === m && !p.errorFree);
    const bounds = points.filter((p) => p.modulation === m && p.errorFree);
    const colour = seriesColour(i);
    series.push({
      name: `${m} measured`,
      x: counted.map((p) => p.snrDb),
      y: counted.map((p) => p.ber),
      line: false,
      dots: 'point',
      colour,
    });
    series.push({ name: `${m} theory`, ...curve(domain, (s) => theoryBer(m, s), curvePoints(m)), dashed: true, colour });
    if (bounds.length > 0) {
      series.push({
        name: `${m} no errors (upper bound)`,
        x: bounds.map((p) => p.snrDb),
        y: bounds.map((p) => p.ber),
        line: false,
        dots: 'point',
        hollow: true,
        colour,
      });
    }
  });
  const colourOf = (m: ModulationName) => seriesColour(mods.indexOf(m));
  const hd = FEC_THRESHOLDS['hd-7'];
  const shown = points.flatMap((p) => [p.ber, p.berHi, p.berLo]).filter((v) => v > 0);
  const lowest = Math.max(1e-9, Math.min(...shown, hd.limit));
  return linePlot({
    kind: 'ber',
    title: 'Pre-FEC BER against SNR',
    box: { width: 560, height: 380 },
    xAxis: { label: 'measured SNR, Es/N0 per polarization (dB)', domain },
    yAxis: { label: 'BER', log: true, domain: [10 ** Math.floor(Math.log10(lowest)), 0.5] },
    series,
    rules: [{ y: hd.limit, label: `${hd.name} FEC limit ${hd.limit}` }],
    errorBars: points.map((p) => ({ x: p.snrDb, lo: p.berLo, hi: p.berHi, colour: colourOf(p.modulation) })),
    topAxis: osnrAxis(points),
    legend: markLegend(
      mods,
      points.some((p) => p.errorFree),
    ),
    legendCorner: 'outside',
  });
}

/**
 * GMI (bits per symbol per polarization) and NGMI against the measured SNR:
 * measured dots (`circle.point`), the AWGN theory of each modulation
 * present (Gauss–Hermite quadrature), and on the NGMI plot the
 * soft-decision FEC limits.
 */
export function informationPlots(points: readonly SweepPoint[]): Markup[] {
  const domain = snrDomain(points);
  const mods = modulationsOf(points);
  const make = (which: 'gmi' | 'ngmi') => {
    const series: LineSeries[] = [];
    mods.forEach((m, i) => {
      const mine = points.filter((p) => p.modulation === m);
      const c = constellation(m);
      const nodes = c.square ? {} : { nodes: PLANE_CURVE_NODES };
      series.push({
        name: `${m} measured`,
        x: mine.map((p) => p.snrDb),
        y: mine.map((p) => p[which]),
        line: false,
        dots: 'point',
        colour: seriesColour(i),
      });
      series.push({
        name: `${m} theory`,
        ...curve(
          domain,
          (s) => (which === 'ngmi' ? normalizedGmi(c, theoryGmi(m, s, nodes)) : theoryGmi(m, s, nodes)),
          curvePoints(m),
        ),
        dashed: true,
        colour: seriesColour(i),
      });
    });
    return series;
  };
  const soft = [FEC_THRESHOLDS['sd-ideal-20'], FEC_THRESHOLDS['sd-ideal-25']];
  return [
    linePlot({
      kind: 'gmi',
      title: 'GMI against SNR',
      xAxis: { label: 'measured SNR (dB)', domain },
      yAxis: { label: 'GMI (bits per symbol)' },
      series: make('gmi'),
      legend: markLegend(mods, false),
      legendCorner: 'outside',
    }),
    linePlot({
      kind: 'ngmi',
      title: 'NGMI against SNR',
      xAxis: { label: 'measured SNR (dB)', domain },
      yAxis: { label: 'NGMI' },
      series: make('ngmi'),
      rules: soft.map((t) => ({ y: t.limit, label: `${t.name} limit ${t.limit.toFixed(3)}` })),
      legend: markLegend(mods, false),
      legendCorner: 'outside',
    }),
  ];
}
