/**
 * The neural demo, `assets/demo/neural/round_stool_sdf.onnx`, as a user meets it: `fieldkiln inspect --json` and
 * `fieldkiln bake` through the built CLI. The network was fitted in PyTorch (`assets/demo/neural/fit_field.py`)
 * to the recipe `assets/demo/round-stool.recipe.json`. So the recipe is the truth it is checked against, and
 * `fit_report.json` (written by the fit, outside Fieldkiln's code) gives the error the checks allow.
 *
 * Measured when this test was written (depth 7, cell 4.38 mm): the ONNX mesh has area 0.48011 m² and volume
 * 0.0071419 m³. The recipe's own mesh has 0.48101 m² and 0.0071604 m³ (−0.19 %, −0.26 %). The ONNX mesh's
 * vertices are a mean 0.18 mm (max 3.0 mm) from the recipe surface, and their colors a mean 0.018 from the recipe's.
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { NodeIO } from '@gltf-transform/core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { openField } from '../../app/fields/open-field.js';
import { createRecipeField } from '../../core/fields/recipe/recipe-field.js';
import { REPO_ROOT } from '../helpers/fixtures.js';
import { runCli } from '../helpers/run-cli.js';

const MODEL = resolve(REPO_ROOT, 'assets/demo/neural/round_stool_sdf.onnx');
const RECIPE = resolve(REPO_ROOT, 'assets/demo/round-stool.recipe.json');
const REPORT = resolve(REPO_ROOT, 'assets/demo/neural/fit_report.json');
/** Depth of both bakes: 2^7 cells along the 0.56 m height, a 4.38 mm cell. The 28 mm foot ring gets 6 cells. */
const DEPTH = 7;

interface Stats { mean: number; p99: number; max: number }
interface FitReport {
  bounds: number[];
  fit: { surface_abs_sdf_mm: Stats; band_10mm_abs_sdf_mm: Stats; surface_color_abs: { mean: number; max: number } };
  probes: { point: number[]; sdf: number; color: number[] }[];
}
interface BakeReport {
  mesh: { watertight: boolean; components: number; genus: number; area: number; volume: number; vertices: number };
  warnings: string[];
}

const fit: FitReport = JSON.parse(readFileSync(REPORT, 'utf8'));
let dir: string;
let onnxReport: BakeReport;
let recipeReport: BakeReport;
let onnxGlb: string;

function bake(field: string, name: string): BakeReport {
  const out = join(dir, `${name}.glb`);
  const rep = join(dir, `${name}.json`);
  const r = runCli(['bake', field, '--out', out, '--report', rep, '--depth', String(DEPTH), '--quiet']);
  expect(r.code, r.stderr).toBe(0);
  return JSON.parse(readFileSync(rep, 'utf8'));
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fieldkiln-demo-neural-'));
  onnxReport = bake(MODEL, 'onnx');
  recipeReport = bake(RECIPE, 'recipe');
  onnxGlb = join(dir, 'onnx.glb');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('fieldkiln inspect on the demo network', () => {
  test('reads an sdf with color, the recipe bounds, level 0, and finds the surface', () => {
    const r = runCli(['inspect', MODEL, '--json']);
    expect(r.code, r.stderr).toBe(0);
    const info = JSON.parse(r.stdout);
    expect(info.kind).toBe('sdf');
    expect(info.hasColor).toBe(true);
    expect(info.outputs).toEqual(['sdf', 'color']);
    // Source: the recipe's own bounds, which fit_field.py wrote into field.bounds.
    const recipe = JSON.parse(readFileSync(RECIPE, 'utf8'));
    expect(info.bounds).toEqual(recipe.bounds);
    expect(info.level).toBe(0);
    expect(info.probe.surfaceFound).toBe(true);
    // The recipe's probe on the same lattice: the network puts 99.95 % of uniform points on the right side
    // (fit_report inside_outside_agreement_uniform), so the share inside should agree to well under a point.
    const rr = JSON.parse(runCli(['inspect', RECIPE, '--json']).stdout);
    expect(Math.abs(info.probe.insideFraction - rr.probe.insideFraction)).toBeLessThan(0.005);
  });
});

describe('fieldkiln bake on the demo network', () => {
  test('gives one watertight component of genus 3, like the recipe', () => {
    // Source: the stool's design. The seat and the foot ring are joined by three legs, so the surface has
    // 3 independent tunnels (graph cycle rank: 6 edges − 4 nodes + 1 = 3). The recipe's own bake says the same.
    expect(recipeReport.mesh.genus).toBe(3);
    expect(onnxReport.mesh.watertight).toBe(true);
    expect(onnxReport.mesh.components).toBe(1);
    expect(onnxReport.mesh.genus).toBe(3);
    expect(onnxReport.warnings).toEqual([]);
  });

  test('area and volume match the recipe mesh at the same depth within the fit error', () => {
    // Tolerance, first order: moving a surface of area A by a mean |δ| changes the volume by at most A·|δ|, and
    // changes the area by at most A·κ·|δ|, with κ the largest sum of principal curvatures. For the stool κ is
    // 1/0.014 + 1/0.152 ≈ 78 /m, on the foot ring's tube (minor radius 14 mm, inner radius 152 mm); the
    // fillets are smaller in area and are ignored. δ is the network's mean |sdf error| on the true surface
    // (fit_report: 0.103 mm). We allow 2δ because marching cubes reads the field up to a cell diagonal off
    // the surface, where the fit is worse (10 mm band mean: 0.66 mm). This gives about 1.4 % for the volume
    // and 1.6 % for the area; measured, −0.26 % and −0.19 %.
    const delta = 2 * fit.fit.surface_abs_sdf_mm.mean / 1000;
    const A = recipeReport.mesh.area;
    const kappa = 1 / 0.014 + 1 / 0.152;
    expect(Math.abs(onnxReport.mesh.volume - recipeReport.mesh.volume)).toBeLessThan(A * delta);
    expect(Math.abs(onnxReport.mesh.area - recipeReport.mesh.area)).toBeLessThan(A * kappa * delta);
  });

  test('every vertex lies near the recipe surface and carries the recipe color', async () => {
    const doc = await new NodeIO().readBinary(new Uint8Array(readFileSync(onnxGlb)));
    const prim = doc.getRoot().listMeshes()[0].listPrimitives()[0];
    const P = prim.getAttribute('POSITION')!;
    const C = prim.getAttribute('COLOR_0');
    expect(C, 'COLOR_0').not.toBeNull();
    const n = P.getCount();
    expect(C!.getCount()).toBe(n);
    expect(n).toBe(onnxReport.mesh.vertices);
    const pos = new Float32Array(3 * n);
    const col = new Float32Array(3 * n);
    const e: number[] = [];
    for (let i = 0; i < n; i++) {
      P.getElement(i, e);
      pos.set(e.slice(0, 3), 3 * i);
      C!.getElement(i, e); // denormalized if stored as normalized integers
      col.set(e.slice(0, 3), 3 * i);
    }
    const recipe = createRecipeField(readFileSync(RECIPE, 'utf8'), 'round-stool.recipe.json');
    const d = await recipe.evaluate(pos);
    const rgb = await recipe.evaluateColor!(pos);
    let sum = 0;
    let max = 0;
    for (const v of d) {
      sum += Math.abs(v);
      max = Math.max(max, Math.abs(v));
    }
    // The recipe is an exact SDF near its surface (Lipschitz 1), so |d| is the vertex's distance to the truth.
    // Bound: the fit's error in the 10 mm band that marching cubes reads (fit_report band_10mm_abs_sdf_mm), plus
    // 0.2 mm of marching cubes' own error at this depth (the recipe's own mesh measured a mean of 0.02 mm and a
    // max of 0.16 mm). Measured: mean 0.18 mm, max 3.0 mm.
    expect((1000 * sum) / n).toBeLessThan(fit.fit.band_10mm_abs_sdf_mm.mean + 0.2);
    expect(1000 * max).toBeLessThan(fit.fit.band_10mm_abs_sdf_mm.max + 0.2);
    let cSum = 0;
    for (let i = 0; i < 3 * n; i++) {
      expect(col[i]).toBeGreaterThanOrEqual(0);
      expect(col[i]).toBeLessThanOrEqual(1);
      cSum += Math.abs(col[i] - rgb[i]);
    }
    // Bound: twice the fit's mean color error on the true surface (fit_report: 0.017), because the vertices sit
    // slightly off that surface, and part colors change abruptly where parts meet. Measured: 0.018.
    expect(cSum / (3 * n)).toBeLessThan(2 * fit.fit.surface_color_abs.mean);
  });
});

describe('the ONNX file reproduces the PyTorch network', () => {
  test("onnxruntime gives the probe outputs fit_field.py recorded from torch", async () => {
    // Source: fit_report.json probes, evaluated by PyTorch. Tolerance 1e-4·(1 + |v|): the fixtures' loader
    // criterion (shared/fixtures/README.md); float32 graphs agree to a few ulps.
    const field = await openField(MODEL);
    try {
      const pts = Float32Array.from(fit.probes.flatMap((p) => p.point));
      const sdf = await field.evaluate(pts);
      const rgb = await field.evaluateColor!(pts);
      fit.probes.forEach((p, i) => {
        expect(Math.abs(sdf[i] - p.sdf), `probe ${i} sdf`).toBeLessThan(1e-4 * (1 + Math.abs(p.sdf)));
        for (let c = 0; c < 3; c++) expect(Math.abs(rgb[3 * i + c] - p.color[c]), `probe ${i} color`).toBeLessThan(1e-4 * (1 + p.color[c]));
      });
    } finally {
      await field.dispose?.();
    }
  });
});
