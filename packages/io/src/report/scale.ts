/** A tick of an axis: where, what it says, and whether it is labelled. */
export interface Tick {
  readonly value: number;
  /** Empty for an unlabelled minor tick. */
  readonly label: string;
  readonly major: boolean;
}

/** A map from data values to pixel positions along one axis, with its ticks. */
export interface Scale {
  readonly kind: 'linear' | 'log';
  /** Data interval [lo, hi], lo < hi (both > 0 for a log scale). */
  readonly domain: readonly [number, number];
  /** Pixel interval the domain maps onto (may run downwards, as a y axis does). */
  readonly range: readonly [number, number];
  /** Pixel position of a value; values outside the domain map outside the range. */
  map(value: number): number;
  ticks(): readonly Tick[];
}

/**
 * Tick positions at 1, 2 or 5 × 10ᵏ steps covering [lo, hi] with about
 * `count` intervals (the step whose interval count is closest to `count`).
 * @example niceTicks(0, 1, 5) // [0, 0.2, 0.4, 0.6, 0.8, 1]
 */
export function niceTicks(lo: number, hi: number, count = 5): number[] {
  if (!(hi > lo) || !Number.isFinite(lo) || !Number.isFinite(hi)) return Number.isFinite(lo) ? [lo] : [];
  const step = niceStep(lo, hi, count);
  const first = Math.ceil(lo / step - 1e-9);
  const last = Math.floor(hi / step + 1e-9);
  const out: number[] = [];
  // Multiplying the index (not adding steps) keeps 0.1·3 from drifting to 0.30000000000000004.
  for (let i = first; i <= last; i++) out.push(roundTo(i * step, step));
  return out;
}

function niceStep(lo: number, hi: number, count: number): number {
  const raw = (hi - lo) / Math.max(1, count);
  const decade = 10 ** Math.floor(Math.log10(raw));
  let best = decade;
  for (const m of [1, 2, 5, 10]) {
    const s = m * decade;
    if (Math.abs((hi - lo) / s - count) < Math.abs((hi - lo) / best - count)) best = s;
  }
  return best;
}

function roundTo(v: number, step: number): number {
  const digits = Math.max(0, -Math.floor(Math.log10(step)) + 1);
  return Number(v.toFixed(Math.min(20, digits)));
}

/**
 * The domain widened to whole tick steps around the finite values (a
 * constant gets ±1, or ±10 % of itself); `pad` widens it first by that
 * fraction of its width on each side.
 * @example niceDomain([0.13, 0.87]) // [0, 1]
 */
export function niceDomain(values: Iterable<number>, pad = 0, count = 5): [number, number] {
  let lo = Number.POSITIVE_INFINITY;
  let hi = Number.NEGATIVE_INFINITY;
  for (const v of values) {
    if (!Number.isFinite(v)) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (lo > hi) return [0, 1];
  if (lo === hi) {
    const d = lo === 0 ? 1 : Math.abs(lo) / 10;
    return [lo - d, hi + d];
  }
  const w = hi - lo;
  lo -= pad * w;
  hi += pad * w;
  // Rounding out can change the step the ticks will use: round out again with that one, so both ends carry a tick.
  for (let pass = 0; pass < 2; pass++) {
    const step = niceStep(lo, hi, count);
    lo = roundTo(Math.floor(lo / step + 1e-9) * step, step);
    hi = roundTo(Math.ceil(hi / step - 1e-9) * step, step);
  }
  return [lo, hi];
}

/**
 * A linear scale: v ↦ r₀ + (v − d₀)·(r₁ − r₀)/(d₁ − d₀), ticks from {@link niceTicks}.
 * @throws RangeError for an empty or non-finite domain
 * @example linearScale([0, 10], [0, 100]).map(2.5) // 25
 */
export function linearScale(domain: readonly [number, number], range: readonly [number, number], tickCount = 5): Scale {
  const [d0, d1] = domain;
  if (!(d1 > d0) || !Number.isFinite(d0) || !Number.isFinite(d1))
    throw new RangeError(`linear scale: expected a domain lo < hi, received [${d0}, ${d1}]`);
  const k = (range[1] - range[0]) / (d1 - d0);
  return {
    kind: 'linear',
    domain,
    range,
    map: (v) => range[0] + (v - d0) * k,
    ticks: () => {
      const values = niceTicks(d0, d1, tickCount);
      const step = values.length > 1 ? values[1] - values[0] : 1;
      return values.map((value) => ({ value, label: formatTick(value, step), major: true }));
    },
  };
}

/**
 * A base-10 logarithmic scale: v ↦ r₀ + (log₁₀ v − log₁₀ d₀)·(r₁ − r₀)/(log₁₀ d₁ − log₁₀ d₀).
 * Labelled ticks at every power of ten (every second or third one when
 * the domain spans more than 8 decades); when it spans fewer than two
 * decades, 2 and 5 × 10ᵏ are labelled too; unlabelled minor ticks at
 * 2 … 9 × 10ᵏ when it spans at most 6 decades.
 * @throws RangeError unless 0 < lo < hi, both finite
 * @example logScale([1e-5, 1e-1], [300, 0]).map(1e-3) // 150
 */
export function logScale(domain: readonly [number, number], range: readonly [number, number]): Scale {
  const [d0, d1] = domain;
  if (!(d0 > 0 && d1 > d0 && Number.isFinite(d1)))
    throw new RangeError(`log scale: expected a domain 0 < lo < hi, received [${d0}, ${d1}]`);
  const l0 = Math.log10(d0);
  const k = (range[1] - range[0]) / (Math.log10(d1) - l0);
  return {
    kind: 'log',
    domain,
    range,
    map: (v) => range[0] + (Math.log10(v) - l0) * k,
    ticks: () => logTicks(d0, d1),
  };
}

function logTicks(lo: number, hi: number): Tick[] {
  const e0 = Math.floor(Math.log10(lo) + 1e-9);
  const e1 = Math.ceil(Math.log10(hi) - 1e-9);
  const decades = Math.log10(hi / lo);
  const every = decades > 16 ? 3 : decades > 8 ? 2 : 1;
  const inside = (v: number) => v >= lo * (1 - 1e-9) && v <= hi * (1 + 1e-9);
  const out: Tick[] = [];
  for (let e = e0; e <= e1; e++) {
    for (let m = 1; m <= 9; m++) {
      const value = Number(`${m}e${e}`);
      if (!inside(value)) continue;
      if (m === 1) out.push({ value, label: e % every === 0 ? powerOfTen(e) : '', major: e % every === 0 });
      else if (decades < 2 && (m === 2 || m === 5)) out.push({ value, label: `${m}·${powerOfTen(e)}`, major: true });
      else if (decades <= 6) out.push({ value, label: '', major: false });
    }
  }
  return out;
}

const SUPERSCRIPT: Readonly<Record<string, string>> = {
  '-': '⁻',
  '0': '⁰',
  '1': '¹',
  '2': '²',
  '3': '³',
  '4': '⁴',
  '5': '⁵',
  '6': '⁶',
  '7': '⁷',
  '8': '⁸',
  '9': '⁹',
};

/** 10ᵉ written with superscript digits: powerOfTen(-3) is '10⁻³'; 10⁰ is '1'. */
export function powerOfTen(e: number): string {
  if (e === 0) return '1';
  return `10${String(e)
    .split('')
    .map((c) => SUPERSCRIPT[c])
    .join('')}`;
}

/** A tick label with the decimals its step needs (−0 written as 0). */
export function formatTick(v: number, step: number): string {
  const decimals = Math.max(0, Math.min(10, -Math.floor(Math.log10(Math.abs(step)) + 1e-9)));
  const s = v.toFixed(decimals);
  return /^-0(\.0*)?$/.test(s) ? s.slice(1) : s.replace('-', '−');
}
