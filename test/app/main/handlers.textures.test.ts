/**
 * The export step's texture maps and collision hull, through the real handlers and bake worker
 * (compiled; see ../app-build.ts), on the bundled lantern-post demo: the same options the CLI's
 * `bake --texture 512 --collision` passes to core's bakeField.
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHandlers, type Handlers } from '../../../app/main/handlers.js';
import type { BakeSettings } from '../../../app/shared/ipc.js';
import { builtWorker, ensureAppBuild, repoRoot } from '../app-build.js';

const demoPath = path.join(repoRoot, 'assets', 'demo', 'lantern-post.recipe.json');
const settings: BakeSettings = { level: 0, depth: 6, method: 'marching-cubes', budget: 3000, lods: 0, minPart: 0, normals: 'field', bounds: null, lipschitz: null, startDepth: null, nonfinite: 'error' };

interface ValidatorReport {
  issues: { numErrors: number; numWarnings: number; messages: { code: string; message: string }[] };
}

describe('export with texture maps and a collision hull', () => {
  let h: Handlers;
  let scratch: string;
  let savePath: string | null = null;

  beforeAll(async () => {
    await ensureAppBuild();
    scratch = mkdtempSync(path.join(tmpdir(), 'fieldkiln-handlers-texture-'));
    h = createHandlers({ demoPath, workerPath: builtWorker, emit: () => {}, chooseOpenPath: async () => null, chooseSavePath: async () => savePath });
    const opened = await h.openStartup({});
    if (!opened.ok) throw new Error(opened.error);
  });
  afterAll(async () => {
    await h?.dispose();
    if (scratch) rmSync(scratch, { recursive: true, force: true });
  });

  it('texture 512 and collision on the lantern post: a GLB clean in gltf-validator with TEXCOORD_0 and a _collision node', async () => {
    savePath = path.join(scratch, 'post.glb');
    const reply = await h.exportMesh({ settings, format: 'glb', colors: true, quantize: false, meshopt: false, name: 'post', lod: 0, texture: 512, collision: true });
    if (!reply.ok) throw new Error(reply.error);
    const r = reply.value!;
    expect(r.path).toBe(savePath);
    expect(r.validator).toMatchObject({ errors: 0, warnings: 0 });
    // The figures the window shows: the texture edge asked for, a coverage share, the hull's size.
    expect(r.texture?.size).toBe(512);
    expect(r.texture!.coverage).toBeGreaterThan(0);
    expect(r.texture!.coverage).toBeLessThanOrEqual(1);
    // A closed convex hull has at least 4 triangles (a tetrahedron), and the post is not flat.
    expect(r.collision!.triangles).toBeGreaterThanOrEqual(4);

    const glb = readFileSync(savePath);
    expect(r.bytes).toBe(glb.length);
    // Khronos glTF-Validator, independent of the worker's own run of it.
    const validator = createRequire(import.meta.url)('gltf-validator') as { validateBytes(b: Uint8Array): Promise<ValidatorReport> };
    const report = await validator.validateBytes(new Uint8Array(glb));
    const messages = report.issues.messages.map((m) => `${m.code}: ${m.message}`).join('; ');
    expect(report.issues.numErrors, messages).toBe(0);
    expect(report.issues.numWarnings, messages).toBe(0);

    // GLB layout (glTF 2.0 spec §4.4): 12-byte header, then the JSON chunk (length, type, data).
    const json = JSON.parse(glb.subarray(20, 20 + glb.readUInt32LE(12)).toString('utf8'));
    const base = json.meshes[json.nodes.find((n: { name: string }) => n.name === 'post').mesh];
    expect(base.primitives[0].attributes.TEXCOORD_0).toBeTypeOf('number');
    expect(base.primitives[0].attributes.TANGENT).toBeTypeOf('number');
    // The hull: node <name>_collision, alone in scene 'collision' (core/export/write-glb.ts).
    const hullIndex = json.nodes.findIndex((n: { name: string }) => n.name === 'post_collision');
    expect(hullIndex).toBeGreaterThanOrEqual(0);
    const hullScene = json.scenes.find((s: { name?: string }) => s.name === 'collision');
    expect(hullScene.nodes).toEqual([hullIndex]);
    // Its triangle count in the file matches the one reported (indices accessor count / 3).
    const hullMesh = json.meshes[json.nodes[hullIndex].mesh];
    expect(json.accessors[hullMesh.primitives[0].indices].count / 3).toBe(r.collision!.triangles);
    expect(json.asset.extras.fieldkiln.options).toMatchObject({ budget: 3000, texture: 512, collision: true });
  }, 120_000);
});
