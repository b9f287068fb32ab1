/**
 * Progress on stderr: a bar with rate and time left on a terminal, plain periodic lines
 * otherwise, nothing when quiet.
 */

/** What Progress writes to: a stream, or anything with `write` (and `isTTY` for the bar). */
export interface ProgressStream {
  isTTY?: boolean;
  write(text: string): unknown;
}

/**
 * Reports progress of `total` subframes: on a terminal one bar redrawn in place (at most every
 * 100 ms) with the rate and the time left; otherwise a plain line at most every 5 s or 10 %, and
 * always at the end; nothing when quiet.
 * @example
 * const p = new Progress('generate run.h5', 400, process.stderr);
 * p.update(400); // stderr (not a TTY): "generate run.h5: 400/400 subframes (100%), 212.5 subframes/s, 0.0s left"
 */
export class Progress {
  private readonly started = Date.now();
  private lastPrint = 0;
  private lastFraction = -1;

  constructor(
    private readonly label: string,
    private readonly total: number,
    private readonly stream: ProgressStream = process.stderr,
    private readonly quiet = false,
    /** What is counted, as printed (subframes; coverage counts grid rows, validate geometry updates). */
    private readonly unit = 'subframes',
  ) {}

  /** Report `done` units finished. */
  update(done: number): void {
    if (this.quiet || this.total <= 0) return;
    const now = Date.now();
    const fraction = done / this.total;
    const elapsed = (now - this.started) / 1000;
    const rate = elapsed > 0 ? done / elapsed : 0;
    const left = rate > 0 ? (this.total - done) / rate : 0;
    if (this.stream.isTTY) {
      if (now - this.lastPrint < 100 && done < this.total) return;
      const width = 28;
      const filled = Math.round(fraction * width);
      const bar = '#'.repeat(filled) + '.'.repeat(width - filled);
      this.stream.write(`\r${this.label} [${bar}] ${(100 * fraction).toFixed(1)}%  ${rate.toFixed(1)} ${this.unit}/s  ${formatSeconds(left)} left `);
      if (done >= this.total) this.stream.write('\n');
    } else {
      // Plain lines at most every 5 s or 10 %, for logs of batch jobs.
      if (done < this.total && now - this.lastPrint < 5000 && fraction - this.lastFraction < 0.1) return;
      this.stream.write(
        `${this.label}: ${done}/${this.total} ${this.unit} (${(100 * fraction).toFixed(0)}%), ${rate.toFixed(1)} ${this.unit}/s, ${formatSeconds(left)} left\n`,
      );
      this.lastFraction = fraction;
    }
    this.lastPrint = now;
  }
}

/** A duration for people. @example formatSeconds(75) // "1m15s" */
function formatSeconds(s: number): string {
  if (!Number.isFinite(s)) return '?';
  if (s < 60) return `${s.toFixed(s < 10 ? 1 : 0)}s`;
  const m = Math.floor(s / 60);
  if (m < 60) return `${m}m${String(Math.round(s - 60 * m)).padStart(2, '0')}s`;
  return `${Math.floor(m / 60)}h${String(m % 60).padStart(2, '0')}m`;
}
