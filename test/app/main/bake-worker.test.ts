/** The bake worker's pure helpers: preview depth, its adaptation, the verdict, plain words. */
import { describe, expect, it } from 'vitest';
import { nextPreviewCap, plainWords, PREVIEW_MAX_DEPTH, PREVIEW_MIN_DEPTH, PREVIEW_TARGET_SECONDS, previewDepth, shapingSupport, verdictOf } from '../../../app/main/bake-worker.js';
import { BAKE_DEFAULTS, bakeField } from '../../../core/pipeline/bake-field.js';
import { FieldkilnError } from '../../../core/types.js';
import { fnField, torusSdf } from '../../helpers/analytic-fields.js';

describe('previewDepth', () => {
  it('is one level shallower, capped, never below the minimum nor deeper than asked', () => {
    expect(previewDepth(7)).toBe(6);
    expect(previewDepth(10)).toBe(PREVIEW_MAX_DEPTH);
    expect(previewDepth(10, 4)).toBe(4);
    expect(previewDepth(4)).toBe(PREVIEW_MIN_DEPTH);
    expect(previewDepth(2)).toBe(2);
  });
  it('drops a level after a slow preview and climbs after a quick one', () => {
    expect(nextPreviewCap(6, PREVIEW_TARGET_SECONDS * 2)).toBe(5);
    expect(nextPreviewCap(PREVIEW_MIN_DEPTH, 10)).toBe(PREVIEW_MIN_DEPTH);
    expect(nextPreviewCap(5, PREVIEW_TARGET_SECONDS / 10)).toBe(6);
    expect(nextPreviewCap(PREVIEW_MAX_DEPTH, 0)).toBe(PREVIEW_MAX_DEPTH);
    expect(nextPreviewCap(5, PREVIEW_TARGET_SECONDS)).toBe(5);
  });
});

describe('verdictOf', () => {
  it("carries core's figures: a torus is one closed piece of genus 1", async () => {
    // Torus: genus 1, one component (Euler characteristic 0).
    const { report } = await bakeField(fnField(torusSdf(0.5, 0.2), [-1, -1, -1, 1, 1, 1]), { depth: 5, skipExport: true });
    const v = verdictOf(report);
    expect(v).toMatchObject({ watertight: true, components: 1, genus: 1, boundaryEdges: 0, nonManifoldEdges: 0, errorMm: null });
    expect(v.triangles).toBe(report.mesh.triangles);
    const stages = v.timings.map(([k]) => k);
    expect(stages[0]).toBe('sample');
    expect(stages).toContain('extract');
    expect(stages).toContain('check');
    expect(stages[stages.length - 1]).toBe('total');
  });
});

describe('shapingSupport', () => {
  it('follows what BAKE_DEFAULTS declares', () => {
    const d = BAKE_DEFAULTS as Record<string, unknown>;
    expect(shapingSupport()).toEqual({ budget: 'budget' in d, lods: 'lods' in d, minPart: 'minPart' in d });
  });
});

describe('plainWords', () => {
  it("keeps a FieldkilnError's own message and marks anything else as a fault", () => {
    expect(plainWords(new FieldkilnError('ball.onnx: file not found (/x/ball.onnx)'))).toBe('ball.onnx: file not found (/x/ball.onnx)');
    expect(plainWords(new TypeError('x is undefined'))).toBe('something went wrong inside Fieldkiln: x is undefined');
  });
});
