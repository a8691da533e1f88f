import { describe, expect, it } from 'vitest';
import { modeledPhaseSeconds, modeledSeconds, modelRates, probeBandwidth, probeFlopRate, probeMachine, runWork } from '../../src/run/probe.js';

describe('machine probe and modeled time', () => {
  it('modeled seconds = bytes / bandwidth + flops / flop rate, per phase (hand numbers)', () => {
    const rates = { bandwidthGBs: 10, flopRateGFLOPs: 2 };
    // 2e9 bytes at 10 GB/s = 0.2 s; 1e9 flops at 2 GFLOP/s = 0.5 s
    expect(modeledPhaseSeconds({ bytes: 2e9, flops: 1e9 }, rates)).toBeCloseTo(0.7, 12);
    const m = modeledSeconds({ setup: { bytes: 1e9, flops: 0 }, solve: { bytes: 0, flops: 4e9 } }, rates);
    expect(m.setupSeconds).toBeCloseTo(0.1, 12);
    expect(m.solveSeconds).toBeCloseTo(2, 12);
    expect(m.totalSeconds).toBeCloseTo(2.1, 12);
  });

  it('targets replace the probe figure they name, and say so', () => {
    const probe = { bandwidthGBs: 8, flopRateGFLOPs: 1.5, probeSeconds: 0.3, method: 'm' };
    expect(modelRates(probe)).toEqual({ bandwidthGBs: 8, flopRateGFLOPs: 1.5, bandwidthFrom: 'probe', flopRateFrom: 'probe' });
    expect(modelRates(probe, { bandwidthGBs: 200 })).toEqual({ bandwidthGBs: 200, flopRateGFLOPs: 1.5, bandwidthFrom: 'target', flopRateFrom: 'probe' });
    expect(modelRates(probe, { flopRateGFLOPs: 50 })).toMatchObject({ bandwidthGBs: 8, flopRateGFLOPs: 50, flopRateFrom: 'target' });
  });

  it('reads work counters only when both phases carry bytes and flops', () => {
    expect(runWork(undefined)).toBeUndefined();
    expect(runWork({ work: { setup: { bytes: 1, flops: 2 } } })).toBeUndefined();
    expect(runWork({ work: { setup: { bytes: 1, flops: 2, matvecs: 0 }, solve: { bytes: 3, flops: 4 } } }))
      .toEqual({ setup: { bytes: 1, flops: 2 }, solve: { bytes: 3, flops: 4 } });
  });

  it('the probe functions return positive finite rates (small sizes here; values are not asserted)', () => {
    const bw = probeBandwidth(1 << 14, 2);
    expect(Number.isFinite(bw) && bw > 0).toBe(true);
    const fl = probeFlopRate();
    expect(Number.isFinite(fl) && fl > 0).toBe(true);
    const m = probeMachine();
    expect(m.bandwidthGBs).toBeGreaterThan(0);
    expect(m.flopRateGFLOPs).toBeGreaterThan(0);
    expect(m.probeSeconds).toBeGreaterThan(0);
    expect(m.method).toMatch(/triad .* 24 bytes per entry.*blockGemmSub \+ luFactor/);
  });
});
