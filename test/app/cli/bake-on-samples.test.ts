/**
 * `fieldkiln bake --on-samples`: a dense grid meshed at its own samples, checked against the shared
 * fixtures' manifest (scikit-image's marching cubes of the very same grid, and the analytic truth), the
 * `isosurface` package on the same samples, and Khronos' glTF-Validator.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { availableParallelism, tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import validator from 'gltf-validator';
import { runCli } from '../../helpers/run-cli.js';
import { fixturePath, hasFixtures, loadManifest } from '../../helpers/fixtures.js';
import { parseNpy } from '../../../core/fields/npy.js';
import { marchingCubesGrid } from '../../../core/meshing/marching-cubes-grid.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { writeNpyF4 } from '../../helpers/npy-writer.js';

const require = createRequire(import.meta.url);
let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fieldkiln-samples-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

interface Reference { area_m2: number; volume_m3: number; euler_characteristic: number; vertices?: number; triangles?: number }

describe.skipIf(!hasFixtures)('bake --on-samples on the shared grid fixtures', () => {
  const manifest = hasFixtures ? loadManifest() : { fixtures: [] };
  for (const fx of manifest.fixtures.filter((f) => f.file.endsWith('.npy'))) {
    test(`${fx.id}: closed, valid, and the manifest's marching-cubes reference of the same grid`, async () => {
      const out = join(dir, `${fx.id}.glb`);
      const rep = join(dir, `${fx.id}.json`);
      const r = runCli(['bake', fixturePath(fx.file), '--on-samples', '--out', out, '--report', rep, '--quiet']);
      expect(r.code, r.stderr).toBe(0);
      const report = JSON.parse(readFileSync(rep, 'utf8'));
      const v = await validator.validateBytes(new Uint8Array(readFileSync(out)), { maxIssues: 20 });
      expect(v.issues.numErrors).toBe(0);
      expect(v.issues.numWarnings).toBe(0);
      expect(report.sampling.mode).toBe('samples');
      expect(report.sampling.evaluations).toBe(0); // the samples are read, not evaluated
      expect(report.sampling.extractionThreads).toBe(1); // small grids stay on the calling thread
      const shape = (fx as unknown as { grid: { shape: number[] } }).grid.shape;
      expect(report.sampling.denseEvaluations).toBe(shape[0] * shape[1] * shape[2]);
      expect(report.mesh.watertight).toBe(true);
      expect(report.mesh.selfIntersections).toBe(0);
      // Source: manifest `grid_marching_cubes_reference` (scikit-image, Lewiner's marching cubes of this
      // very grid) where given, else the analytic truth; χ exactly, area and volume to 0.5% (the two
      // methods triangulate the same cell polygons differently).
      const ref = ((fx as unknown as { grid_marching_cubes_reference?: Reference }).grid_marching_cubes_reference ?? fx.truth) as Reference;
      console.log(`${fx.id}: area ${report.mesh.area.toFixed(5)} vs ${ref.area_m2}, volume ${report.mesh.volume.toFixed(6)} vs ${ref.volume_m3}, ${report.mesh.vertices} vertices, ${report.mesh.triangles} triangles`);
      expect(report.mesh.eulerCharacteristic).toBe(ref.euler_characteristic);
      expect(Math.abs(report.mesh.area / ref.area_m2 - 1)).toBeLessThan(0.005);
      expect(Math.abs(report.mesh.volume / ref.volume_m3 - 1)).toBeLessThan(0.005);
      // One vertex per sign-changing grid edge, as in every marching cubes: the same count as the reference.
      if (ref.vertices !== undefined) expect(report.mesh.vertices).toBe(ref.vertices);
      if (ref.triangles !== undefined) expect(report.mesh.triangles).toBe(ref.triangles);
      // The isosurface package's marching cubes on the same samples: same number of triangles for a
      // surface without ambiguous faces (common practice: its output is an oracle for plain cases).
      const grid = parseNpy(new Uint8Array(readFileSync(fixturePath(fx.file))), fx.file);
      const [nz, ny, nx] = grid.shape as number[];
      const iso = require('isosurface') as { marchingCubes(d: number[], f: (x: number, y: number, z: number) => number): { cells: number[][] } };
      const oracle = iso.marchingCubes([nx, ny, nz], (x, y, z) => grid.data[x + nx * (y + ny * z)] as number);
      console.log(`${fx.id}: isosurface package ${oracle.cells.length} triangles`);
      expect(report.mesh.triangles).toBe(oracle.cells.length);
    });
  }
});

describe('bake --on-samples on a grid large enough for every core', () => {
  test('a 170³ torus grid: the same mesh as the single-threaded extractor, genus 1, area near 4π²Rr', () => {
    // Torus R = 0.6, r = 0.25 (analytic area 4π²Rr = 5.922 m²), sampled on 170³ nodes over [-1, 1]³:
    // 4.9 M samples, above the CLI's threshold for the worker threads.
    const n = 170, h = 2 / (n - 1);
    const values = new Float32Array(n * n * n);
    for (let k = 0, q = 0; k < n; k++)
      for (let j = 0; j < n; j++)
        for (let i = 0; i < n; i++, q++) {
          const x = -1 + i * h, y = -1 + j * h, z = -1 + k * h;
          values[q] = Math.hypot(Math.hypot(x, z) - 0.6, y) - 0.25;
        }
    const npy = join(dir, 'torus170.npy');
    writeFileSync(npy, writeNpyF4([n, n, n], values));
    writeFileSync(join(dir, 'torus170.json'), JSON.stringify({ kind: 'sdf', bounds: [-1, -1, -1, 1, 1, 1], units: 'm' }));
    const out = join(dir, 'torus170.glb');
    const rep = join(dir, 'torus170.report.json');
    const r = runCli(['bake', npy, '--on-samples', '--out', out, '--report', rep, '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    const report = JSON.parse(readFileSync(rep, 'utf8'));
    const single = analyzeMesh(marchingCubesGrid(values, [n, n, n], { kind: 'sdf', level: 0, origin: [-1, -1, -1], spacing: [h, h, h] }).mesh);
    if (availableParallelism() > 1) expect(report.sampling.extractionThreads).toBe(availableParallelism()); // every core
    expect(report.mesh.triangles).toBe(single.triangles);
    expect(report.mesh.vertices).toBe(single.vertices);
    expect(report.mesh.genus).toBe(1);
    expect(report.mesh.watertight).toBe(true);
    expect(Math.abs(report.mesh.area / (4 * Math.PI ** 2 * 0.6 * 0.25) - 1)).toBeLessThan(0.005);
  });
});

describe('bake --on-samples: a density grid, and a sample that is not a number', () => {
  test('density (inside where high) meshes the same ball; a NaN sample is refused by default, outside with --nonfinite outside', () => {
    // density = 40·sigmoid(−(|p| − 0.6)/0.05), level 20: a ball of radius 0.6 (area 4π·0.36 = 4.524 m², analytic).
    const n = 48, h = 2 / (n - 1);
    const values = new Float32Array(n * n * n);
    for (let k = 0, q = 0; k < n; k++)
      for (let j = 0; j < n; j++)
        for (let i = 0; i < n; i++, q++) values[q] = 40 / (1 + Math.exp((Math.hypot(-1 + i * h, -1 + j * h, -1 + k * h) - 0.6) / 0.05));
    const write = (name: string, v: Float32Array) => {
      writeFileSync(join(dir, `${name}.npy`), writeNpyF4([n, n, n], v));
      writeFileSync(join(dir, `${name}.json`), JSON.stringify({ kind: 'density', bounds: [-1, -1, -1, 1, 1, 1], level: 20, units: 'm' }));
      return join(dir, `${name}.npy`);
    };
    const rep = join(dir, 'dens.report.json');
    const ok = runCli(['bake', write('dens', values), '--on-samples', '--out', join(dir, 'dens.glb'), '--report', rep, '--quiet']);
    expect(ok.code, ok.stderr).toBe(0);
    const report = JSON.parse(readFileSync(rep, 'utf8'));
    expect(report.mesh.watertight).toBe(true);
    expect(report.mesh.genus).toBe(0);
    expect(Math.abs(report.mesh.area / (4 * Math.PI * 0.36) - 1)).toBeLessThan(0.01);
    const holed = values.slice();
    holed[n * n * 3 + n * 3 + 3] = NaN; // well outside the ball
    const bad = write('holed', holed);
    const refused = runCli(['bake', bad, '--on-samples', '--out', join(dir, 'holed.glb')]);
    expect(refused.code).not.toBe(0);
    expect(refused.stderr).toMatch(/the grid holds 1 non-finite samples .*--nonfinite outside/);
    expect(existsSync(join(dir, 'holed.glb'))).toBe(false);
    const taken = runCli(['bake', bad, '--on-samples', '--nonfinite', 'outside', '--out', join(dir, 'holed.glb'), '--quiet']);
    expect(taken.code, taken.stderr).toBe(0);
    expect(taken.stderr).toMatch(/1 samples were NaN or ±Inf and were treated as outside/);
  });
});

describe('bake --on-samples: what it does not apply to', () => {
  test('a recipe has no samples: one clear message, no file', () => {
    const out = join(dir, 'recipe.glb');
    const r = runCli(['bake', 'assets/demo/lantern-post.recipe.json', '--on-samples', '--out', out]);
    expect(r.code).not.toBe(0);
    expect(r.stderr).toMatch(/--on-samples meshes a dense grid at its own samples; .*recipe field, which has none/);
    expect(existsSync(out)).toBe(false);
  });
  test.skipIf(!hasFixtures)('--depth, --bounds and dual contouring are refused with --on-samples', () => {
    const out = join(dir, 'x.glb');
    const grid = fixturePath('sphere_sdf_grid64.npy');
    expect(runCli(['bake', grid, '--on-samples', '--depth', '8', '--out', out]).stderr).toMatch(/--depth does not apply with --on-samples/);
    expect(runCli(['bake', grid, '--on-samples', '--bounds=-0.5,-0.5,-0.5,0.5,0.5,0.5', '--out', out]).stderr).toMatch(/--bounds does not apply/);
    expect(runCli(['bake', grid, '--on-samples', '--method', 'dual-contouring', '--out', out]).stderr).toMatch(/marching cubes only/);
    expect(existsSync(out)).toBe(false);
  });
});
