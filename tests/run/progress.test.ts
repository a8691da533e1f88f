import { describe, expect, it } from 'vitest';
import { ProgressBar } from '../../src/run/progress.js';

function fakeStream(columns = 60) {
  const chunks: string[] = [];
  return { chunks, stream: { columns, write: (s: string) => { chunks.push(s); return true; } } as unknown as NodeJS.WriteStream };
}

describe('ProgressBar', () => {
  it('draws one carriage-returned line per update, fits the terminal, and clears itself', () => {
    const { chunks, stream } = fakeStream(40);
    const bar = new ProgressBar(stream, 10);
    bar.update(0, 4, '');
    bar.update(2, 4, 'duct-pulse × gmres-bilu0-down-with-a-very-long-name');
    expect(chunks[0]).toBe('\r[..........] 0/4');
    expect(chunks[1].startsWith('\r[#####.....] 2/4  duct-pulse')).toBe(true);
    expect(chunks[1].length - 1).toBeLessThanOrEqual(39);
    bar.finish();
    expect(chunks[2]).toMatch(/^\r +\r$/);
    bar.finish(); // idempotent
    expect(chunks).toHaveLength(3);
  });
});
