/**
 * A one-line progress bar on a terminal stream (stderr). Has a lifecycle: update/status…, then
 * finish. It writes nothing when the stream is not a terminal, and lays itself out for 80 columns
 * when the terminal reports none (0 or undefined, as some CI consoles and emulators do).
 *
 *   [######........] 3/35  0:12, ~1:40 left  loading stirred-tank for gmres+block-jacobi
 */
export interface ProgressOptions {
  /** Bar cells (default 20; fewer on a narrow terminal). */
  width?: number;
  /** Clock in milliseconds (tests pass a fake one). */
  now?: () => number;
  /** Redraw every second so the elapsed time moves while a long run is busy (default true). */
  tick?: boolean;
}

/** m:ss, or h:mm:ss from one hour. */
export function formatDuration(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds < 0) return '–';
  const s = Math.round(seconds);
  const h = Math.floor(s / 3600), m = Math.floor((s % 3600) / 60), r = s % 60;
  const mm = h > 0 ? String(m).padStart(2, '0') : String(m);
  return `${h > 0 ? `${h}:` : ''}${mm}:${String(r).padStart(2, '0')}`;
}

export class ProgressBar {
  private lastWidth = 0;
  private active = false;
  private done = 0;
  private total = 0;
  private label = '';
  private readonly start: number;
  private readonly now: () => number;
  private readonly tty: boolean;
  private timer: ReturnType<typeof setInterval> | undefined;

  constructor(private readonly stream: NodeJS.WriteStream, private readonly opts: ProgressOptions = {}) {
    this.now = opts.now ?? (() => Date.now());
    this.start = this.now();
    this.tty = stream.isTTY === true;
  }

  /** `done` of `total` finished; `label` says what is happening now (or what just finished). */
  update(done: number, total: number, label: string): void {
    this.done = done;
    this.total = total;
    if (label) this.label = label;
    this.draw();
  }

  /** Say what is happening without a change in the count ("generating duct-pulse", "loading …"). */
  status(label: string): void {
    this.label = label;
    this.draw();
  }

  /** The line as drawn for `cols` columns (exposed for tests). */
  line(cols: number): string {
    const elapsed = (this.now() - this.start) / 1000;
    const left = this.done > 0 && this.done < this.total ? (elapsed / this.done) * (this.total - this.done) : undefined;
    const time = `${formatDuration(elapsed)}${left !== undefined ? `, ~${formatDuration(left)} left` : ''}`;
    const count = `${this.done}/${this.total}`;
    const cells = Math.max(5, Math.min(this.opts.width ?? 20, Math.floor(cols / 5)));
    const frac = this.total === 0 ? 0 : this.done / this.total;
    const filled = Math.round(frac * cells);
    let s = `[${'#'.repeat(filled)}${'.'.repeat(cells - filled)}] ${count}  ${time}`;
    if (this.label) s += `  ${this.label}`;
    const max = cols - 1; // never write into the last column: some terminals wrap there
    if ([...s].length > max) s = `${[...s].slice(0, Math.max(0, max - 1)).join('')}…`;
    return s;
  }

  private draw(): void {
    if (!this.tty) return;
    const reported = this.stream.columns;
    const cols = typeof reported === 'number' && reported >= 20 ? reported : 80;
    const line = this.line(cols);
    const n = [...line].length;
    this.stream.write(`\r${line}${' '.repeat(Math.max(0, this.lastWidth - n))}`);
    this.lastWidth = n;
    this.active = true;
    if (this.timer === undefined && this.opts.tick !== false) {
      this.timer = setInterval(() => this.draw(), 1000);
      this.timer.unref?.();
    }
  }

  /** Clear the bar so later output starts on a clean line. */
  finish(): void {
    if (this.timer !== undefined) { clearInterval(this.timer); this.timer = undefined; }
    if (!this.active) return;
    this.stream.write(`\r${' '.repeat(this.lastWidth)}\r`);
    this.active = false;
    this.lastWidth = 0;
  }
}
