import { describe, expect, it } from 'vitest';
import { scalePlot } from '../../src/report/svg/scale.js';

const input = {
  title: 'a <b> & c', recipe: 'gmres-schwarz "x"', parts: [1, 2, 4, 8], iterations: [5, 5, 7, 9],
  perIteration: [5e-5, 4e-5, 4.5e-5, 6e-5], compute: [5e-5, 2.6e-5, 1.4e-5, 0.8e-5], converged: [true, true, true, false], idPrefix: 't-',
};

describe('scale plot', () => {
  it('one recipe series in each panel plus the compute share; points per P; hollow when unsolved; text escaped', () => {
    const svg = scalePlot(input);
    expect(svg.startsWith('<svg')).toBe(true);
    expect(svg).toContain('data-plot="scale"');
    expect(svg.match(/<path[^>]*data-series=/g)).toHaveLength(3);
    expect(svg.match(/<circle/g)).toHaveLength(8);
    expect(svg.match(/<circle[^>]*fill="#fff"/g)).toHaveLength(2);
    expect(svg).toContain('a &lt;b&gt; &amp; c');
    expect(svg).toContain('data-series="gmres-schwarz &quot;x&quot;"');
    expect(scalePlot(input)).toBe(svg); // deterministic
  });

  it('no part counts: the empty plot', () => {
    expect(scalePlot({ ...input, parts: [], iterations: [], perIteration: [], compute: [], converged: [] })).toMatch(/no part counts/);
  });
});
