/**
 * `fieldkiln check` end to end: every check on any mesh file, where a check fails, JSON output, and
 * exit status 0 (all pass) / 3 (a check fails) / 1 (unreadable) / 2 (usage).
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { NodeIO, WebIO } from '@gltf-transform/core';
import { exportMesh } from '../../../core/export/export-mesh.js';
import { areaWeightedNormals } from '../../../core/normals/area-weighted-normals.js';
import type { MeshData } from '../../../core/types.js';
import { runCli } from '../../helpers/run-cli.js';
import { bowTie, octahedron, withFlipped, withHole } from '../../core/checks/test-meshes.js';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fieldkiln-check-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function write(name: string, m: MeshData): Promise<string> {
  const p = join(dir, name);
  const ext = name.split('.').pop() as 'glb' | 'ply' | 'stl' | 'obj';
  writeFileSync(p, await exportMesh(ext, { ...m, normals: areaWeightedNormals(m.positions, m.indices) }));
  return p;
}

describe('check: good meshes', () => {
  test('a baked GLB with LODs: every level passes, exit 0', () => {
    const out = join(dir, 'lantern.glb');
    const b = runCli(['bake', 'assets/demo/lantern-post.recipe.json', '--out', out, '--depth', '6', '--budget', '3000', '--lods', '1', '--quiet']);
    expect(b.code, b.stderr).toBe(0);
    const r = runCli(['check', out]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/mesh 'fieldkiln-mesh_LOD0'/);
    expect(r.stdout).toMatch(/mesh 'fieldkiln-mesh_LOD1'/);
    expect(r.stdout).toMatch(/all checks pass/);
    const j = JSON.parse(runCli(['check', out, '--json']).stdout);
    expect(j.pass).toBe(true);
    expect(j.meshes).toHaveLength(2);
    expect(j.meshes[0].checks.map((c: { name: string }) => c.name)).toEqual(['finite', 'closed', 'edge-manifold', 'vertex-manifold', 'consistently-wound', 'no-degenerate-triangles', 'outward-oriented']);
    expect(j.meshes[0].triangles).toBeLessThanOrEqual(3000);
  });

  test('an octahedron as PLY, STL and OBJ: χ = 2, genus 0, volume 4/3', async () => {
    for (const ext of ['ply', 'stl', 'obj']) {
      const r = runCli(['check', await write(`octa.${ext}`, octahedron()), '--json']);
      expect(r.code, `${ext}: ${r.stderr}`).toBe(0);
      const m = JSON.parse(r.stdout).meshes[0];
      expect([m.eulerCharacteristic, m.genus, m.components]).toEqual([2, 0, 1]);
      expect(m.volume).toBeCloseTo(4 / 3, 5); // |x| + |y| + |z| ≤ 1
    }
  });
});

test('a .gltf with its buffer in a separate .bin beside it (as other tools write it) is read and passes', async () => {
  const doc = await new WebIO().readBinary(await exportMesh('glb', { ...octahedron(), normals: areaWeightedNormals(octahedron().positions, octahedron().indices) }));
  await new NodeIO().write(join(dir, 'sep.gltf'), doc);
  expect(readFileSync(join(dir, 'sep.gltf'), 'utf8')).toMatch(/"uri": ?"sep\.bin"/);
  const r = runCli(['check', join(dir, 'sep.gltf'), '--json']);
  expect(r.code, r.stderr).toBe(0);
  expect(JSON.parse(r.stdout).meshes[0].triangles).toBe(8);
});

describe('check: broken meshes fail with exit 3 and say where', () => {
  test('one triangle removed (hole): closed fails at the removed face', async () => {
    const r = runCli(['check', await write('hole.ply', withHole(octahedron(), 0))]);
    expect(r.code).toBe(3);
    expect(r.stdout).toMatch(/FAIL {2}closed\s+3 edges, e\.g\. at \(0\.5, 0\.5, 0\)/);
    expect(r.stdout).toMatch(/checks failed: 'ply' \(closed\)/);
  });

  test('a bow-tie vertex: vertex-manifold fails at the apex (0, 0, 0)', async () => {
    const r = runCli(['check', await write('bowtie.obj', bowTie()), '--json']);
    expect(r.code).toBe(3);
    const bad = JSON.parse(r.stdout).meshes[0].checks.filter((c: { ok: boolean }) => !c.ok);
    expect(bad.map((c: { name: string; where: number[][] }) => [c.name, c.where])).toEqual([['vertex-manifold', [[0, 0, 0]]]]);
  });

  test('one triangle flipped: consistently-wound fails', async () => {
    const r = runCli(['check', await write('flip.stl', withFlipped(octahedron(), 2))]);
    expect(r.code).toBe(3);
    expect(r.stdout).toMatch(/FAIL {2}consistently-wound\s+3 edges/);
  });
});

describe('check: bad input', () => {
  test('an unknown extension is a usage error (exit 2); a missing file and garbage bytes are errors (exit 1) with one clear message', () => {
    const u = runCli(['check', join(dir, 'x.fbx')]);
    expect(u.code).toBe(2);
    expect(u.stderr).toMatch(/check reads \.glb, \.gltf, \.ply, \.stl, \.obj files/);
    const missing = runCli(['check', join(dir, 'nope.glb')]);
    expect(missing.code).toBe(1);
    expect(missing.stderr).toMatch(/file does not exist/);
    const junk = join(dir, 'junk.glb');
    writeFileSync(junk, 'this is not a mesh');
    const j = runCli(['check', junk]);
    expect(j.code).toBe(1);
    expect(j.stderr).toMatch(/glTF: could not read the file/);
    expect(j.stderr.match(/error:/g)?.length).toBe(1);
    expect(j.stderr).not.toMatch(/\n\s+at /);
  });
});
