import { basename } from 'node:path';
import type { FileAnalysis } from '../analysis/analyze-file.js';
import { analysisToJson } from '../figures/analysis-json.js';
import { presentedLinewidth } from '../figures/figure-schema.js';
import { BOUND_NOTE, FIGURE_COLUMNS, figureRows } from '../figures/figure-table.js';
import { frequencyTrackPlot, phasePlot } from './carrier-plot.js';
import { densityPlot } from './density-plot.js';
import { convergencePlots, tapsPlot } from './equalizer-plots.js';
import { figure, plotRow, type ReportSection, reportPage } from './page.js';
import { spectrumPlot } from './spectrum-plot.js';
import { el, join, type Markup, text } from './svg.js';
import { flattenValues, formatNumber, gridTable, valueTable } from './value-table.js';

/**
 * The report of one analysis as a self-contained HTML page: the recovered
 * constellation of each polarization, the equalizer's taps and
 * convergence, the carrier phase with its slips, the input spectrum, every
 * figure and diagnostic, and the reproducibility record. Pictures whose
 * data are missing (no `plotData`, a replaced stage that reports other
 * diagnostics) are left out with a note saying so.
 * @example writeReport('run-07.html', analysisReport(analyzeFile('run-07.csv', { analysis: { plotData: true } })));
 */
export function analysisReport(analysis: FileAnalysis): string {
  const { capture, result } = analysis;
  const m = result.measurement;
  const rec = result.record;
  // The headline: a few columns of the figures table, for the totals.
  const headline = ['BER', 'SNR dB', 'GMI b', 'NGMI', 'EVM %'];
  const figures: [string, string][] = m
    ? [
        ...FIGURE_COLUMNS.filter((c) => headline.includes(c.heading)).map((c): [string, string] => [
          c.heading,
          c.cell(m, reportNumber),
        ]),
        ['offset MHz', formatNumber(result.freqOffsetHz / 1e6)],
        ['slips', String(result.cycleSlips.count)],
      ]
    : [];
  return reportPage({
    title: capture.name,
    subtitle:
      `${capture.modulation.toUpperCase()} at ${formatNumber(capture.symbolRate / 1e9)} GBd, ${formatNumber(capture.sampleRate / 1e9)} GSa/s · ` +
      `${basename(capture.dataPath)}${capture.descriptor.notes ? ` · ${capture.descriptor.notes}` : ''}`,
    verdict: { ok: result.ok, label: result.ok ? 'measured' : `failed: ${result.failure?.check}` },
    figures,
    sections: [
      constellationSection(analysis),
      equalizerSection(analysis),
      carrierSection(analysis),
      spectrumSection(analysis),
      valuesSection(analysis),
      recordSection(analysis),
    ],
    footer: `Written by ${rec.library} ${rec.version}. This page loads nothing: it is complete as it is.`,
  });
}

/** The note that stands in for a picture whose data the analysis does not have. */
function absent(what: string): Markup {
  return el('p', { class: 'note' }, text(`No ${what} in this analysis.`));
}

function constellationSection({ result }: FileAnalysis): ReportSection {
  const heading = 'Recovered constellation';
  const density = result.plotData?.constellation;
  if (!density || density.counted === 0) return { id: 'constellation', heading, body: absent('constellation density') };
  const m = result.measurement;
  // With the polarizations swapped, receiver output x carries the transmitted y: take that one's gain.
  const swapped = m?.sync.swapped ?? false;
  const gain = (p: 'x' | 'y') => m?.perPol[swapped ? (p === 'x' ? 'y' : 'x') : p].gain ?? 1;
  const outside = density.outside.x + density.outside.y;
  return {
    id: 'constellation',
    heading,
    note:
      `Density of the ${density.counted.toLocaleString('en')} recovered symbols per polarization that the figures measure ` +
      '(darker: more symbols, on a logarithmic scale); the open circles are the ideal points at the measured gain. ' +
      'Tight round clouds centred on the circles are healthy.' +
      (outside > 0 ? ` ${outside} symbols fell outside the picture.` : ''),
    body: plotRow(figure(densityPlot(density, 'x', gain('x'))), figure(densityPlot(density, 'y', gain('y')))),
  };
}

function equalizerSection({ result }: FileAnalysis): ReportSection {
  const eq = result.diagnostics.equalizer;
  if (!eq.finalTaps || !eq.trace)
    return { id: 'equalizer', heading: 'Equalizer', body: absent('butterfly-equalizer diagnostics') };
  const [cost, separation] = convergencePlots(eq);
  const c = eq.convergence;
  return {
    id: 'equalizer',
    heading: 'Equalizer',
    note:
      `${eq.taps} taps per filter; converged: ${c.converged ? 'yes' : 'no'} ` +
      `(separation index x ${formatNumber(c.separationX)}, y ${formatNumber(c.separationY)}, threshold ${c.threshold}); ` +
      `singularity restarts ${eq.singularity.restarts}. The adapted symbols count the passes over the start of the capture before the output.`,
    body: plotRow(
      figure(
        tapsPlot(eq),
        'A healthy equalizer has its energy in hxx and hyy (or hxy and hyx when it swapped the polarizations), peaked near the centre.',
      ),
      figure(cost, 'The cost falls and levels off as the equalizer converges; each rule has its own scale.'),
      figure(separation),
    ),
  };
}

function carrierSection({ capture, result }: FileAnalysis): ReportSection {
  const phase = result.diagnostics.phase;
  if (!phase.phaseTrace || phase.phaseTrace.x.length === 0)
    return { id: 'carrier', heading: 'Carrier phase', body: absent('carrier-phase trace') };
  // A tracking frequency stage gives one estimate per span: worth a picture of its own.
  const track = result.diagnostics.frequency.track;
  const coarse = result.diagnostics.coarseFrequency.freqOffsetHz;
  const trackPlot =
    track.length > 1 ? [figure(frequencyTrackPlot(track, capture.symbolRate, Number.isFinite(coarse) ? coarse : 0))] : [];
  const known = (v: number | null, scale: number, unit: string) =>
    v !== null && Number.isFinite(v) ? `${formatNumber(v / scale)} ${unit}` : 'not estimated';
  const lw = presentedLinewidth(result.linewidthHz);
  const linewidth = lw.linewidthBelowResolution ? "below the estimate's resolution" : known(lw.linewidthHz, 1e3, 'kHz');
  return {
    id: 'carrier',
    heading: 'Carrier phase',
    note:
      `Frequency offset ${known(result.freqOffsetHz, 1e6, 'MHz')}; linewidth ${linewidth}; ` +
      `${result.cycleSlips.count} cycle slips (marked).`,
    body: plotRow(
      figure(phasePlot(phase, capture.symbolRate, result.cycleSlips, result.record.analysis.skipSymbols, result.freqOffsetHz)),
      ...trackPlot,
    ),
  };
}

function spectrumSection({ result }: FileAnalysis): ReportSection {
  const spectra = result.plotData?.inputSpectra;
  return {
    id: 'spectrum',
    heading: 'Input spectrum',
    body: spectra
      ? plotRow(
          figure(
            spectrumPlot(spectra),
            'The four channels should have the same shape and level; the signal occupies about (1 + roll-off)·Rs/2 plus the frequency offset.',
          ),
        )
      : absent('input spectrum'),
  };
}

function valuesSection(analysis: FileAnalysis): ReportSection {
  const { result } = analysis;
  const m = result.measurement;
  // The record has its own section.
  const rest = Object.fromEntries(Object.entries(analysisToJson(analysis)).filter(([k]) => k !== 'record'));
  const notes = [
    ...(m?.berIsUpperBound ? [`${BOUND_NOTE[0].toUpperCase()}${BOUND_NOTE.slice(1)}.`] : []),
    ...analysis.capture.warnings.map((w) => `Warning: ${w}`),
  ];
  return {
    id: 'values',
    heading: 'Every figure and diagnostic',
    note: notes.length > 0 ? notes.join(' ') : undefined,
    body: join([
      m
        ? gridTable(...tableOf(figureRows(m, reportNumber)))
        : el('p', { class: 'note' }, text(`The analysis failed (${result.failure?.check}): ${result.failure?.reason}`)),
      el('div', { style: 'height:12px' }),
      valueTable(flattenValues(rest)),
    ]),
  };
}

function recordSection({ result }: FileAnalysis): ReportSection {
  const rec = result.record;
  return {
    id: 'record',
    heading: 'How to repeat this analysis',
    note: 'The library version, the SHA-256 of the input samples, and the chain with every option of every stage.',
    body: join([
      valueTable(
        flattenValues({
          library: rec.library,
          version: rec.version,
          inputSha256: rec.inputSha256,
          samples: rec.samples,
          analysis: rec.analysis,
        }),
      ),
      el('pre', { class: 'record' }, text(JSON.stringify(rec.pipeline, null, 2))),
    ]),
  };
}

/** A number in the report: six significant digits whatever the column's (the page has room). */
function reportNumber(v: number | null): string {
  return v === null ? '–' : formatNumber(v);
}

function tableOf(t: { headings: string[]; rows: string[][] }): [string[], string[][]] {
  return [t.headings, t.rows];
}
