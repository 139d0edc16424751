/**
 * A progress bar with an estimated time to completion, written to a stream
 * (the command's stderr). On a terminal it redraws one line; otherwise it
 * writes one line per finished capture, so that logs stay readable.
 */
export class ProgressBar {
  private done = 0;
  private analysed = 0;
  private readonly started = performance.now();

  constructor(
    private readonly total: number,
    private readonly write: (s: string) => void,
    private readonly terminal: boolean,
    private readonly width = 30,
  ) {}

  /** Records one finished capture; `analysed` false for one skipped (it does not count towards the rate). */
  tick(key: string, analysed: boolean): void {
    this.done++;
    if (analysed) this.analysed++;
    const fraction = this.total === 0 ? 1 : this.done / this.total;
    const filled = Math.round(fraction * this.width);
    const bar = `[${'#'.repeat(filled)}${'.'.repeat(this.width - filled)}]`;
    const text = `${bar} ${this.done}/${this.total} ${Math.round(100 * fraction)} % ETA ${this.eta()} ${analysed ? '' : '(skipped) '}${key}`;
    this.write(this.terminal ? `\r${text}\x1b[K` : `${text}\n`);
  }

  /** Ends the bar's line (on a terminal). */
  finish(): void {
    if (this.terminal && this.done > 0) this.write('\n');
  }

  /** Remaining time from the mean time per analysed capture so far (skipped ones take no time). */
  private eta(): string {
    const left = this.total - this.done;
    if (left === 0) return '0 s';
    if (this.analysed === 0) return '–';
    const seconds = ((performance.now() - this.started) / 1000 / this.analysed) * left;
    if (seconds < 60) return `${Math.ceil(seconds)} s`;
    const m = Math.floor(seconds / 60);
    return m < 60 ? `${m} min ${Math.round(seconds - 60 * m)} s` : `${Math.floor(m / 60)} h ${m % 60} min`;
  }
}
