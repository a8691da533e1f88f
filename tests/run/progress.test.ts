import { describe, expect, it } from 'vitest';
import { formatDuration, ProgressBar } from '../../src/run/progress.js';

function fakeStream(columns: number | undefined = 60, isTTY = true) {
  const chunks: string[] = [];
  return { chunks, stream: { columns, isTTY, write: (s: string) => { chunks.push(s); return true; } } as unknown as NodeJS.WriteStream };
}

function clock(): { now: () => number; advance: (s: number) => void } {
  let t = 1_000_000;
  return { now: () => t, advance: (s) => { t += s * 1000; } };
}

describe('ProgressBar', () => {
  it('draws one carriage-returned line per update, fits the terminal, and clears itself', () => {
    const { chunks, stream } = fakeStream(40);
    const c = clock();
    const bar = new ProgressBar(stream, { width: 10, now: c.now, tick: false });
    bar.update(0, 4, '');
    c.advance(10);
    bar.update(2, 4, 'duct-pulse × gmres-bilu0-down-with-a-very-long-name');
    expect(chunks[0]).toBe('\r[........] 0/4  0:00');
    expect(chunks[1].startsWith('\r[####....] 2/4  0:10, ~0:10 left  duct')).toBe(true);
    expect([...chunks[1]].length - 1).toBeLessThanOrEqual(39);
    bar.finish();
    expect(chunks[2]).toMatch(/^\r +\r$/);
    bar.finish(); // idempotent
    expect(chunks).toHaveLength(3);
  });

  it('says what it is doing while a matrix loads or is generated, and estimates the time left from the runs so far', () => {
    const { chunks, stream } = fakeStream(120);
    const c = clock();
    const bar = new ProgressBar(stream, { now: c.now, tick: false });
    bar.update(0, 10, '');
    bar.status('preparing stirred-tank');
    expect(chunks[chunks.length - 1]).toContain('preparing stirred-tank');
    c.advance(65);
    bar.update(5, 10, 'loading room-sound for gmres+ilu0');
    expect(chunks[chunks.length - 1]).toContain('1:05, ~1:05 left  loading room-sound for gmres+ilu0');
    bar.finish();
  });

  it('copes with a terminal that reports 0 or no columns (lays out for 80), and writes nothing off a terminal', () => {
    for (const cols of [0, undefined]) {
      const { chunks, stream } = fakeStream(cols);
      const bar = new ProgressBar(stream, { tick: false });
      bar.update(1, 3, 'x'.repeat(200));
      expect(chunks).toHaveLength(1);
      expect([...chunks[0]].length - 1).toBeLessThanOrEqual(79);
      expect(chunks[0].endsWith('…')).toBe(true);
      bar.finish();
    }
    const { chunks, stream } = fakeStream(80, false);
    const bar = new ProgressBar(stream, { tick: false });
    bar.update(1, 3, 'x');
    bar.status('loading');
    bar.finish();
    expect(chunks).toEqual([]);
  });

  it('formats durations as m:ss and h:mm:ss', () => {
    expect(formatDuration(0)).toBe('0:00');
    expect(formatDuration(65.4)).toBe('1:05');
    expect(formatDuration(3725)).toBe('1:02:05');
    expect(formatDuration(NaN)).toBe('–');
  });
});
