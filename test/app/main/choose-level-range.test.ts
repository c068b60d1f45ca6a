/** The level slider's range, on probes of analytic fields with known value ranges. */
import { describe, expect, it } from 'vitest';
import { chooseLevelRange, SDF_GROW_SHARE, SDF_SHRINK_SHARE } from '../../../app/main/choose-level-range.js';
import { probeField } from '../../../core/sampling/probe-field.js';
import { fnField, sphereSdf } from '../../helpers/analytic-fields.js';

describe('chooseLevelRange', () => {
  it('sphere SDF: from 90 % of its deepest value to 15 % of the shortest side, starting at 0', async () => {
    // Sphere r = 0.8 on [-1, 1]³: the probe's 33-node lattice includes the centre, where the SDF is
    // exactly -0.8; the corners are at √3 − 0.8 ≈ 0.93 (distance formula).
    const field = fnField(sphereSdf(0.8), [-1, -1, -1, 1, 1, 1]);
    const probe = await probeField(field);
    expect(probe.valueRange[0]).toBeCloseTo(-0.8, 6);
    expect(probe.valueRange[1]).toBeCloseTo(Math.sqrt(3) - 0.8, 6);
    const c = chooseLevelRange('sdf', probe, field.bounds, 0);
    expect(c.range[0]).toBeCloseTo(SDF_SHRINK_SHARE * -0.8, 6); // -0.72
    expect(c.range[1]).toBeCloseTo(SDF_GROW_SHARE * 2, 6); // 0.3: 15 % of the 2 m side
    expect(c).toMatchObject({ start: 0, startReason: 'declared' });
  });

  it('density without a declared level: 1st to 99th percentile, starting in the middle', () => {
    const c = chooseLevelRange('density', { valueRange: [0, 90], percentiles: { p1: 0, p50: 3, p99: 60 } }, [0, 0, 0, 1, 1, 1], undefined);
    expect(c).toEqual({ range: [0, 60], start: 30, startReason: 'middle of the values' });
  });

  it('a declared level outside the values widens the range to hold it', () => {
    const c = chooseLevelRange('density', { valueRange: [0, 90], percentiles: { p1: 0, p50: 3, p99: 60 } }, [0, 0, 0, 1, 1, 1], 75);
    expect(c).toEqual({ range: [0, 75], start: 75, startReason: 'declared' });
  });

  it('occupancy starts at logit 0 when the file declares nothing', () => {
    const c = chooseLevelRange('occupancy', { valueRange: [-8, 9], percentiles: { p1: -7, p50: -5, p99: 6 } }, [0, 0, 0, 1, 1, 1], undefined);
    expect(c).toEqual({ range: [-7, 6], start: 0, startReason: 'kind default' });
  });

  it('a constant or all-NaN field still gives a usable range around the start', () => {
    const flat = chooseLevelRange('density', { valueRange: [4, 4], percentiles: { p1: 4, p50: 4, p99: 4 } }, [0, 0, 0, 1, 1, 1], undefined);
    expect(flat.range[0]).toBeLessThan(flat.start);
    expect(flat.range[1]).toBeGreaterThan(flat.start);
    const nan = chooseLevelRange('sdf', { valueRange: [NaN, NaN], percentiles: { p1: NaN, p50: NaN, p99: NaN } }, [0, 0, 0, 1, 2, 3], undefined);
    expect(nan).toEqual({ range: [-0.15, 0.15], start: 0, startReason: 'kind default' });
  });
});
