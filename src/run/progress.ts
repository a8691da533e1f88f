/** A one-line progress bar on a terminal stream (stderr). Has a lifecycle: update…, then finish. */
export class ProgressBar {
  private lastWidth = 0;
  private active = false;
  constructor(private readonly stream: NodeJS.WriteStream, private readonly width = 24) {}

  update(done: number, total: number, label: string): void {
    const frac = total === 0 ? 1 : done / total;
    const filled = Math.round(frac * this.width);
    const cols = this.stream.columns ?? 80;
    let line = `[${'#'.repeat(filled)}${'.'.repeat(this.width - filled)}] ${done}/${total}${label ? `  ${label}` : ''}`;
    if (line.length > cols - 1) line = line.slice(0, Math.max(0, cols - 2));
    this.stream.write(`\r${line}${' '.repeat(Math.max(0, this.lastWidth - line.length))}`);
    this.lastWidth = line.length;
    this.active = true;
  }

  /** Clear the bar so later output starts on a clean line. */
  finish(): void {
    if (!this.active) return;
    this.stream.write(`\r${' '.repeat(this.lastWidth)}\r`);
    this.active = false;
  }
}
