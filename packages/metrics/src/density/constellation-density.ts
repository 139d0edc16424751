import { constellation, type ModulationName, OptionError } from '@intradyne/core';

/** A 2-D histogram of the recovered symbols of both polarizations on one fixed square grid. */
export interface ConstellationHistogram {
  /** The stated modulation, whose ideal points the grid was sized for. */
  readonly modulation: ModulationName;
  /** Cells per axis. */
  readonly bins: number;
  /** The grid spans [−extent, extent] on both axes (unit-power constellation units). */
  readonly extent: number;
  /**
   * Counts per polarization, bins² cells, row-major: cell (row r, column c)
   * holds symbols with re in [−E + c·w, −E + (c + 1)·w) and im in
   * [−E + r·w, −E + (r + 1)·w), w = 2E/bins (row 0 at the bottom).
   */
  readonly x: Uint32Array;
  /** Counts of the y polarization, laid out as `x`. */
  readonly y: Uint32Array;
  /** Symbols counted per polarization (inside the grid or not). */
  readonly counted: number;
  /** Symbols that fell outside the grid, per polarization. */
  readonly outside: {
    /** Symbols of the x polarization outside the grid. */
    readonly x: number;
    /** Symbols of the y polarization outside the grid. */
    readonly y: number;
  };
}

/** Options of {@link ConstellationDensity}. */
export interface ConstellationDensityOptions {
  /** Cells per axis (integer 8 … 512, default 96). */
  readonly bins?: number;
  /** Leading symbols not counted (default 0). */
  readonly skipLeading?: number;
  /** Trailing symbols not counted: the last ones are held back and never counted (default 0). */
  readonly skipTrailing?: number;
}

/**
 * Accumulates the constellation density of a symbol stream in bounded
 * memory: counts on a fixed grid, whatever the number of symbols. The grid
 * is centred on 0 and reaches 1.5 times the outermost coordinate of the
 * unit-power constellation, so that the noise clouds of the outer points
 * fit. The trailing symbols are held in a ring of `skipTrailing` slots
 * until later symbols push them out, so the counts do not depend on the
 * block sizes.
 * @throws OptionError for a bad modulation, bin count or skip
 * @example const d = new ConstellationDensity('16qam', { skipLeading: 2048 }); d.push(block); const h = d.result();
 */
export class ConstellationDensity {
  /** Cells per axis. */
  readonly bins: number;
  /** Half-width of the square grid, unit-power constellation units. */
  readonly extent: number;
  private readonly skipLeading: number;
  private readonly hold: number;
  private readonly counts: [Uint32Array, Uint32Array];
  private readonly outside = new Float64Array(2);
  /** Held-back symbols per polarization: [re, im] interleaved, `hold` slots. */
  private readonly ring: [Float64Array, Float64Array];
  private seen = 0;
  private counted = 0;

  constructor(
    /** The stated modulation: sizes the grid. */
    readonly modulation: ModulationName,
    options: ConstellationDensityOptions = {},
  ) {
    const c = constellation(modulation);
    const bins = options.bins ?? 96;
    if (!Number.isInteger(bins) || bins < 8 || bins > 512)
      throw new OptionError('constellation-density', 'bins', 'an integer from 8 to 512', bins);
    const skipLeading = options.skipLeading ?? 0;
    if (!Number.isInteger(skipLeading) || skipLeading < 0)
      throw new OptionError('constellation-density', 'skipLeading', 'an integer ≥ 0', skipLeading);
    const hold = options.skipTrailing ?? 0;
    if (!Number.isInteger(hold) || hold < 0)
      throw new OptionError('constellation-density', 'skipTrailing', 'an integer ≥ 0', hold);
    let outer = 0;
    for (const v of c.points) outer = Math.max(outer, Math.abs(v));
    this.bins = bins;
    this.extent = 1.5 * outer;
    this.skipLeading = skipLeading;
    this.hold = hold;
    this.counts = [new Uint32Array(bins * bins), new Uint32Array(bins * bins)];
    this.ring = [new Float64Array(2 * hold), new Float64Array(2 * hold)];
  }

  /** Takes the next symbols: a symbols block, or any interleaved complex x and y of equal lengths. */
  push(block: { readonly x: Float64Array; readonly y: Float64Array }): void {
    const n = block.x.length >> 1;
    const hold = this.hold;
    for (let k = 0; k < n; k++) {
      const index = this.seen + k;
      if (hold === 0) {
        if (index >= this.skipLeading) this.count(block.x[2 * k], block.x[2 * k + 1], block.y[2 * k], block.y[2 * k + 1]);
        continue;
      }
      // Symbol index − hold leaves the ring as symbol index takes its slot.
      const slot = 2 * (index % hold);
      const rx = this.ring[0];
      const ry = this.ring[1];
      if (index >= hold && index - hold >= this.skipLeading) this.count(rx[slot], rx[slot + 1], ry[slot], ry[slot + 1]);
      rx[slot] = block.x[2 * k];
      rx[slot + 1] = block.x[2 * k + 1];
      ry[slot] = block.y[2 * k];
      ry[slot + 1] = block.y[2 * k + 1];
    }
    this.seen += n;
  }

  /** The counts so far (copied). */
  result(): ConstellationHistogram {
    return {
      modulation: this.modulation,
      bins: this.bins,
      extent: this.extent,
      x: this.counts[0].slice(),
      y: this.counts[1].slice(),
      counted: this.counted,
      outside: { x: this.outside[0], y: this.outside[1] },
    };
  }

  private count(xr: number, xi: number, yr: number, yi: number): void {
    this.counted++;
    this.cell(0, xr, xi);
    this.cell(1, yr, yi);
  }

  private cell(p: 0 | 1, re: number, im: number): void {
    const scale = this.bins / (2 * this.extent);
    const c = Math.floor((re + this.extent) * scale);
    const r = Math.floor((im + this.extent) * scale);
    // A NaN symbol fails both tests and counts as outside.
    if (c >= 0 && c < this.bins && r >= 0 && r < this.bins) this.counts[p][r * this.bins + c]++;
    else this.outside[p]++;
  }
}
