/**
 * The check stage on a worker thread (app/node/check-mesh-off-thread.ts) must give what core's `checkMesh`
 * gives on the calling thread, leave the caller's arrays alone, stop when aborted, and name a failure; and a
 * bake that runs its checks there must report what a bake on one thread reports.
 *
 * The worker runs from build/ (like marching-cubes-grid-parallel.test.ts): run `npx tsc -p tsconfig.build.json` first.
 */
import { describe, expect, test } from 'vitest';
import { checkMesh, type MeshChecks } from '../../../core/checks/check-mesh.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { bakeField, type BakeReport } from '../../../core/pipeline/bake-field.js';
import { CancelledError, FieldkilnError, type MeshData } from '../../../core/types.js';
import { checkMeshOffThread } from '../../../app/node/check-mesh-off-thread.js';
import { fnField, sphereSdf, torusSdf } from '../../helpers/analytic-fields.js';
import { combineMeshes } from '../../helpers/combine-meshes.js';

const torus = fnField(torusSdf(0.5, 0.2), [-0.8, -0.3, -0.8, 0.8, 0.3, 0.8]);
const torusMesh = async (depth = 6) => marchingCubes(await sampleOctree(torus, { depth }));

/** Two closed spheres that overlap: every triangle pair where the shells cross is a self-intersection. */
async function overlappingSpheres(): Promise<MeshData> {
  const a = marchingCubes(await sampleOctree(fnField(sphereSdf(0.4, [-0.15, 0, 0]), [-0.6, -0.45, -0.45, 0.3, 0.45, 0.45]), { depth: 5 }));
  const b = marchingCubes(await sampleOctree(fnField(sphereSdf(0.4, [0.15, 0, 0]), [-0.3, -0.45, -0.45, 0.6, 0.45, 0.45]), { depth: 5 }));
  return combineMeshes(a, b);
}

const withoutSeconds = ({ seconds, ...rest }: MeshChecks) => (expect(seconds).toBeGreaterThanOrEqual(0), rest);

describe('checkMeshOffThread', () => {
  test('gives checkMesh’s result: a torus (genus 1, χ = 0) and two crossing spheres', async () => {
    for (const mesh of [await torusMesh(), await overlappingSpheres()]) {
      const here = checkMesh(mesh);
      const there = await checkMeshOffThread(mesh);
      expect(withoutSeconds(there)).toEqual(withoutSeconds(here));
    }
    const t = await checkMeshOffThread(await torusMesh());
    // A torus is one closed surface of genus 1: V − E + F = 0 (Euler–Poincaré).
    expect(t.report).toMatchObject({ watertight: true, components: 1, genus: 1, eulerCharacteristic: 0 });
    expect(t.selfIntersections).toBe(0);
    expect(t.checks.every((c) => c.ok)).toBe(true);
    const s = await checkMeshOffThread(await overlappingSpheres());
    expect(s.selfIntersections).toBeGreaterThan(0);
  });

  test('copies the mesh: the caller’s arrays keep their buffers and values', async () => {
    const mesh = await torusMesh(5);
    const before = { p: mesh.positions.slice(), i: mesh.indices.slice() };
    await checkMeshOffThread(mesh);
    expect(mesh.positions.buffer.byteLength).toBeGreaterThan(0); // not detached
    expect(mesh.positions).toEqual(before.p);
    expect(mesh.indices).toEqual(before.i);
  });

  test('an aborted signal rejects with CancelledError, before and during the work', async () => {
    const mesh = await torusMesh(7);
    const done = new AbortController();
    done.abort();
    await expect(checkMeshOffThread(mesh, done.signal)).rejects.toBeInstanceOf(CancelledError);
    const stop = new AbortController();
    const run = checkMeshOffThread(mesh, stop.signal);
    setTimeout(() => stop.abort(), 5);
    await expect(run).rejects.toBeInstanceOf(CancelledError);
  });

  test('a mesh the checks refuse fails with the reason', async () => {
    const bad = { positions: new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0]), indices: new Uint32Array([0, 1, 7]) };
    await expect(checkMeshOffThread(bad)).rejects.toThrow(/checkMeshOffThread: the checks failed: .*index 7 .*out of range/);
  });
});

describe('bakeField with its checks on another thread', () => {
  const strip = (r: BakeReport) => ({ ...r, timings: {} });

  test('reports what a bake on one thread reports, with and without a budget', async () => {
    for (const opts of [{ depth: 6 }, { depth: 6, budget: 2000, lods: 1 }]) {
      const one = await bakeField(torus, { ...opts, skipExport: true });
      const two = await bakeField(torus, { ...opts, skipExport: true, meshChecker: checkMeshOffThread });
      expect(strip(two.report)).toEqual(strip(one.report));
      expect(two.report.timings.checkOffThread).toBeGreaterThan(0);
      expect(one.report.timings.checkOffThread).toBeUndefined();
    }
  });

  test('checks the base level: the decimated mesh when there is a budget', async () => {
    let seen = 0;
    const r = await bakeField(torus, { depth: 6, budget: 1500, skipExport: true, meshChecker: (m, s) => ((seen = m.indices.length / 3), checkMeshOffThread(m, s)) });
    expect(seen).toBe(r.report.mesh.triangles);
    expect(seen).toBeLessThanOrEqual(1500);
  });

  test('a failing checker fails the bake, naming the check stage', async () => {
    const failing = async () => {
      throw new Error('no threads left');
    };
    await expect(bakeField(torus, { depth: 5, skipExport: true, meshChecker: failing })).rejects.toThrow(/the check stage failed: no threads left/);
  });

  test('a bake that fails after the checks started aborts them', async () => {
    let signal: AbortSignal | undefined;
    const broken = fnField(torusSdf(0.5, 0.2), [-0.8, -0.3, -0.8, 0.8, 0.3, 0.8]);
    const evaluate = broken.evaluate.bind(broken);
    // Sampling works; the normals' evaluations (after cleanup, when the checks have started) fail.
    broken.evaluate = async (p: Float32Array) => {
      if (signal) throw new FieldkilnError('the network went away');
      return evaluate(p);
    };
    const bake = bakeField(broken, { depth: 5, skipExport: true, meshChecker: (m, s) => ((signal = s), checkMeshOffThread(m, s)) });
    await expect(bake).rejects.toThrow(/the network went away/);
    expect(signal?.aborted).toBe(true);
  });
});
