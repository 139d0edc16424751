import { isModulationName } from '@intradyne/core';
import type { SweepRow } from '../sweep/result-row.js';
import { figure, plotRow, type ReportSection, reportPage } from './page.js';
import { el, join, text } from './svg.js';
import { berPlot, informationPlots, type SweepPoint } from './sweep-plots.js';
import { flattenValues, formatNumber, gridTable, valueTable } from './value-table.js';

/** Where a sweep's rows came from, for the page's heading and its reproducibility section. */
export interface SweepReportContext {
  /** The folder or manifest swept (or the shards merged). */
  readonly source: string;
  /** The program that made the table (shown in the record). */
  readonly library: string;
  /** Its version (`LIBRARY_VERSION`). */
  readonly version: string;
  /** The analysis settings every capture was analysed with (as JSON). */
  readonly settings?: unknown;
  /** The SHA-256 of those settings (`settingsFingerprint`). */
  readonly settingsSha256?: string;
}

const num = (v: unknown): number => (typeof v === 'number' ? v : Number.NaN);

/** A row's plot data, or null for a failed row or one without a finite SNR and BER. */
export function sweepPoint(r: SweepRow): SweepPoint | null {
  if (r.ok !== true || !isModulationName(r.modulation)) return null;
  const p = {
    modulation: r.modulation,
    symbolRate: num(r.symbol_rate_bd),
    snrDb: num(r.snr_db),
    ber: num(r.ber),
    berLo: num(r.ber_ci95_lo),
    berHi: num(r.ber_ci95_hi),
    gmi: num(r.gmi),
    ngmi: num(r.ngmi),
    errorFree: r.ber_is_upper_bound === true,
  };
  return Number.isFinite(p.snrDb) && Number.isFinite(p.ber) && Number.isFinite(p.berHi) ? p : null;
}

/**
 * The report of a sweep as a self-contained HTML page, from its final
 * results rows (a sweep's or merged shards'): BER against SNR with the
 * 95 % intervals, the theory curves and the FEC threshold; GMI and NGMI
 * against SNR; the table of every row; the settings and fingerprints.
 * @example writeReport('osnr.html', sweepReport(report.rows, { source: 'osnr-sweep', library: 'intradyne', version: LIBRARY_VERSION }));
 */
export function sweepReport(rows: readonly SweepRow[], context: SweepReportContext): string {
  const points = rows.map(sweepPoint).filter((p): p is SweepPoint => p !== null);
  const failed = rows.filter((r) => r.ok !== true);
  const sections: ReportSection[] = [];
  if (points.length > 0) {
    const [gmi, ngmi] = informationPlots(points);
    sections.push({
      id: 'ber',
      heading: 'BER against SNR',
      note:
        `${points.length} captures measured. Each dot is a capture at its measured SNR; the bar is its exact 95 % interval ` +
        '(Clopper–Pearson; a capture without errors shows its upper bound, the bar reaching the bottom edge). ' +
        'The dashed curve is the AWGN theory: the horizontal gap from a dot to it is the implementation penalty.',
      body: plotRow(figure(berPlot(points))),
    });
    sections.push({
      id: 'information',
      heading: 'GMI and NGMI against SNR',
      note: 'Generalized mutual information per polarization estimated from the recovered symbols, with the AWGN theory dashed.',
      body: plotRow(figure(gmi), figure(ngmi)),
    });
  } else {
    sections.push({ id: 'ber', heading: 'BER against SNR', body: el('p', { class: 'note' }, text('No capture was measured.')) });
  }
  const cell = (v: unknown, digits?: 'exp'): string =>
    typeof v === 'number' ? (digits === 'exp' && v !== 0 ? v.toExponential(2) : formatNumber(v)) : v === null ? '–' : String(v);
  const warned = rows.filter((r) => typeof r.warnings === 'string');
  const notes = [
    failed.length > 0 ? `${failed.length} of ${rows.length} captures failed; their reason is in the last column.` : '',
    warned.length > 0 ? `${warned.length} captures carry a warning (in the last column).` : '',
    rows.some((r) => r.ber_is_upper_bound === true)
      ? 'A BER marked "<" is the upper end of the 95 % interval of a capture without bit errors, not an estimate.'
      : '',
  ].filter((n) => n !== '');
  sections.push({
    id: 'rows',
    heading: 'Every capture',
    note: notes.length > 0 ? notes.join(' ') : undefined,
    body: gridTable(
      [
        'capture',
        'modulation',
        'SNR dB',
        'BER',
        '95 % interval',
        'GMI b',
        'NGMI',
        'offset MHz',
        'slips',
        'penalty dB',
        'failure or warning',
      ],
      rows.map((r) => [
        cell(r.capture),
        cell(r.modulation),
        cell(typeof r.snr_db === 'number' ? Number(r.snr_db.toFixed(2)) : r.snr_db),
        `${r.ber_is_upper_bound === true ? '< ' : ''}${cell(r.ber, 'exp')}`,
        r.ber_ci95_hi === null ? '–' : `${cell(r.ber_ci95_lo, 'exp')} – ${cell(r.ber_ci95_hi, 'exp')}`,
        cell(typeof r.gmi === 'number' ? Number(r.gmi.toFixed(4)) : r.gmi),
        cell(typeof r.ngmi === 'number' ? Number(r.ngmi.toFixed(4)) : r.ngmi),
        cell(typeof r.freq_offset_hz === 'number' ? Number((r.freq_offset_hz / 1e6).toFixed(1)) : r.freq_offset_hz),
        cell(r.cycle_slips),
        cell(
          typeof r.implementation_penalty_db === 'number'
            ? Number(r.implementation_penalty_db.toFixed(2))
            : r.implementation_penalty_db,
        ),
        r.ok === true
          ? typeof r.warnings === 'string'
            ? `warning: ${r.warnings}`
            : ''
          : `${cell(r.failure_check)}: ${cell(r.failure_reason)}`,
      ]),
    ),
  });
  const pipelines = [...new Set(rows.map((r) => r.pipeline_sha256).filter((v) => typeof v === 'string'))];
  sections.push({
    id: 'record',
    heading: 'How to repeat this sweep',
    note: 'The library version, the settings every capture was analysed with, and per capture the SHA-256 of its files.',
    body: join([
      valueTable(
        flattenValues({
          source: context.source,
          library: context.library,
          version: context.version,
          settingsSha256: context.settingsSha256 ?? null,
          pipelineSha256: pipelines.length === 1 ? pipelines[0] : pipelines,
          settings: context.settings ?? null,
        }),
      ),
      el('div', { style: 'height:12px' }),
      gridTable(
        ['capture', 'input SHA-256 (files)', 'samples SHA-256'],
        rows.map((r) => [cell(r.capture), cell(r.input_sha256), cell(r.samples_sha256)]),
      ),
    ]),
  });
  return reportPage({
    title: `Sweep of ${context.source}`,
    subtitle: `${rows.length} captures, ${rows.length - failed.length} measured, ${failed.length} failed`,
    verdict: { ok: failed.length === 0, label: failed.length === 0 ? 'all measured' : `${failed.length} failed` },
    sections,
    footer: `Written by ${context.library} ${context.version}. This page loads nothing: it is complete as it is.`,
  });
}
