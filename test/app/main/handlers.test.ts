/**
 * The request handlers with the real bake worker and core (compiled; see ../app-build.ts): opening,
 * the user-chosen-paths rule, newer-cancels-older, stop, plain errors, export with provenance.
 */
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHandlers, type Handlers } from '../../../app/main/handlers.js';
import type { BakeRequest, ProgressEvent } from '../../../app/shared/ipc.js';
import { builtWorker, ensureAppBuild, repoRoot } from '../app-build.js';

const demoPath = path.join(repoRoot, 'assets', 'demo', 'lantern-post.recipe.json');
const fixtures = path.resolve(repoRoot, '../shared/fixtures');
const bake = (over: Partial<BakeRequest> = {}): BakeRequest => ({ quality: 'full', level: 0, depth: 6, method: 'marching-cubes', budget: 0, lods: 0, minPart: 0, normals: 'field', bounds: null, lipschitz: null, startDepth: null, nonfinite: 'error', ...over });

describe('request handlers over the bake worker', () => {
  let h: Handlers;
  let scratch: string;
  const events: ProgressEvent[] = [];
  const dialogs: { open: string | null; save: string | null } = { open: null, save: null };

  beforeAll(async () => {
    await ensureAppBuild();
    scratch = mkdtempSync(path.join(tmpdir(), 'fieldkiln-handlers-'));
    h = createHandlers({
      demoPath,
      workerPath: builtWorker,
      emit: (e) => events.push(e),
      chooseOpenPath: async () => dialogs.open,
      chooseSavePath: async () => dialogs.save,
    });
  });
  afterAll(async () => {
    await h?.dispose();
    if (scratch) rmSync(scratch, { recursive: true, force: true });
  });

  it('opens the bundled demo when no field is named, with the facts the recipe declares', async () => {
    const reply = await h.openStartup({});
    if (!reply.ok) throw new Error(reply.error);
    const info = reply.value;
    const recipe = JSON.parse(readFileSync(demoPath, 'utf8'));
    expect(info.name).toBe('lantern-post.recipe.json');
    expect(info.kind).toBe('sdf');
    expect(info.bounds).toEqual(recipe.bounds);
    expect(info.hasColor).toBe(true);
    expect(info.declaredLevel).toBe(0);
    expect(info.levelRange[0]).toBeLessThan(0);
    expect(info.levelRange[1]).toBeGreaterThan(0);
    expect(info.recent).toEqual([{ name: 'lantern-post.recipe.json', path: demoPath }]);
    expect(events.some((e) => e.job === 'open' && e.stage === 'open')).toBe(true);
  });

  it('refuses a path the user never chose, and grants nothing for it', async () => {
    const reply = await h.openRecent({ path: '/etc/hostname' });
    expect(reply).toEqual({
      ok: false,
      error: 'refused to open hostname: Fieldkiln opens only files you chose in this session (open it with Open field… or drop it on the window)',
    });
    expect(h.grants.allows('/etc/hostname', 'read')).toBe(false);
  });

  it('opens what the open dialog chose, and re-opens the demo from the recent list', async () => {
    dialogs.open = path.join(fixtures, 'sphere_sdf.onnx');
    const reply = await h.openDialog({});
    if (!reply.ok) throw new Error(reply.error);
    // ../shared/fixtures/manifest.json: sphere_sdf.onnx is an sdf with field.level "0" and a color output.
    expect(reply.value!.kind).toBe('sdf');
    expect(reply.value!.declaredLevel).toBe(0);
    expect(reply.value!.outputs).toContain('color');
    expect(reply.value!.recent.map((r) => r.name)).toEqual(['sphere_sdf.onnx', 'lantern-post.recipe.json']);
    const back = await h.openRecent({ path: demoPath });
    expect(back.ok).toBe(true);
    dialogs.open = null;
    expect(await h.openDialog({})).toEqual({ ok: true, value: null }); // the user closed the dialog
  });

  it('reports a field with no surface at the level in plain words, and the next bake still works', async () => {
    // The post's deepest inside value is about -0.06 m (its thickest part is ~12 cm across): at -1 m nothing is inside.
    const none = await h.bake(bake({ level: -1 }));
    expect(none.ok).toBe(false);
    expect(!none.ok && none.error).toMatch(/^no surface: the field does not cross level -1 inside the bounds/);
    const ok = await h.bake(bake());
    expect(ok.ok).toBe(true);
  });

  it('a newer bake cancels the older one', async () => {
    const older = h.bake(bake({ depth: 9 }));
    const newer = h.bake(bake({ quality: 'preview', level: 0.01 }));
    const [a, b] = await Promise.all([older, newer]);
    expect(a).toEqual({ ok: false, error: 'stopped', cancelled: true });
    if (!b.ok) throw new Error(b.error);
    expect(b.value.quality).toBe('preview');
    expect(b.value.level).toBe(0.01);
  });

  it('cancel stops a running bake, which answers cancelled; progress named its stage', async () => {
    events.length = 0;
    const running = h.bake(bake({ depth: 10 }));
    while (!events.some((e) => e.job === 'full' && e.stage === 'sample')) await new Promise((r) => setTimeout(r, 20));
    expect(await h.cancel({})).toEqual({ ok: true, value: null });
    expect(await running).toEqual({ ok: false, error: 'stopped', cancelled: true });
  });

  it('a full bake reports stages in order, with a closed verdict for the demo', async () => {
    events.length = 0;
    const reply = await h.bake(bake());
    if (!reply.ok) throw new Error(reply.error);
    const stages = [...new Set(events.filter((e) => e.jobId === reply.value.jobId).map((e) => e.stage))];
    // bakeField's stages (core/pipeline/bake-field.ts): sampling first, then extraction, checks, done.
    expect(stages[0]).toBe('sample');
    expect(stages[stages.length - 1]).toBe('done');
    expect(stages.indexOf('extract')).toBeGreaterThan(0);
    expect(stages.indexOf('check')).toBeGreaterThan(stages.indexOf('extract'));
    expect(reply.value.verdict.watertight).toBe(true);
    expect(reply.value.verdict.triangles).toBe(reply.value.mesh.indices.length / 3);
    expect(reply.value.problemEdges.open.length).toBe(0);
  });

  it('export writes where the save dialog chose, valid glTF, with the source file hash in the extras', async () => {
    dialogs.save = path.join(scratch, 'post'); // no extension: .glb is added
    const reply = await h.exportMesh({ settings: { ...bake(), level: 0.004 }, format: 'glb', colors: false, quantize: false, meshopt: false, name: 'post', lod: 0 });
    if (!reply.ok) throw new Error(reply.error);
    const target = path.join(scratch, 'post.glb');
    expect(reply.value).toMatchObject({ path: target, format: 'glb', validator: { errors: 0 } });
    const glb = readFileSync(target);
    expect(reply.value!.bytes).toBe(glb.length);
    expect(h.grants.allows(target, 'write')).toBe(true);
    // GLB layout (glTF 2.0 spec §4.4): 12-byte header, then the JSON chunk (length, type, data).
    const jsonLength = glb.readUInt32LE(12);
    const json = JSON.parse(glb.subarray(20, 20 + jsonLength).toString('utf8'));
    const sha256 = createHash('sha256').update(readFileSync(demoPath)).digest('hex');
    expect(json.asset.extras.fieldkiln.source).toMatchObject({ kind: 'sdf', file: 'lantern-post.recipe.json', sha256 });
    expect(json.asset.extras.fieldkiln.options).toMatchObject({ depth: 6, level: 0.004, method: 'marching-cubes' });
    expect(json.meshes[0].name).toBe('post');
    expect(json.meshes[0].primitives[0].attributes.COLOR_0).toBeUndefined(); // colors off
    const validator = createRequire(import.meta.url)('gltf-validator') as { validateBytes(b: Uint8Array): Promise<{ issues: { numErrors: number } }> };
    expect((await validator.validateBytes(new Uint8Array(glb))).issues.numErrors).toBe(0);
  });
});
