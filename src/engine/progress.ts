/**
 * Progress for long runs: a bar with rate and time left on a terminal
 * (cli-progress), plain periodic lines when output is not a terminal.
 */
import cliProgress from 'cli-progress';

export class Progress {
  private bar: cliProgress.SingleBar | null = null;
  private done = 0;
  private lastLine = 0;
  private readonly start = Date.now();
  constructor(private readonly total: number, private readonly quiet: boolean) {
    if (quiet || total === 0) return;
    if (process.stderr.isTTY) {
      this.bar = new cliProgress.SingleBar(
        { format: 'jobs {bar} {value}/{total}  {rate} jobs/s  about {eta_formatted} left', stream: process.stderr, hideCursor: true },
        cliProgress.Presets.shades_classic,
      );
      this.bar.start(total, 0, { rate: '0.00' });
    }
  }
  tick(): void {
    this.done++;
    const secs = (Date.now() - this.start) / 1000;
    const rate = secs > 0 ? this.done / secs : 0;
    if (this.bar) this.bar.update(this.done, { rate: rate.toFixed(2) });
    else if (!this.quiet && (Date.now() - this.lastLine > 10_000 || this.done === this.total)) {
      this.lastLine = Date.now();
      const left = rate > 0 ? Math.round((this.total - this.done) / rate) : NaN;
      process.stderr.write(`jobs ${this.done}/${this.total} (${rate.toFixed(2)} jobs/s, about ${Number.isFinite(left) ? left : '?'} s left)\n`);
    }
  }
  stop(): void {
    this.bar?.stop();
  }
}
