/**
 * `fieldkiln bake` end to end, as a user runs it: valid GLB files (Khronos glTF-Validator), a report with
 * the promised keys, and for bad input one clear message, a non-zero exit and no output file.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import validator from 'gltf-validator';
import { NodeIO } from '@gltf-transform/core';
import { runCli } from '../../helpers/run-cli.js';
import { fixturePath, hasFixtures, REPO_ROOT } from '../../helpers/fixtures.js';
import { writeNpyF4 } from '../../helpers/npy-writer.js';
import { writeSumModel } from '../../helpers/onnx-writer.js';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fieldkiln-cli-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function validate(path: string) {
  return validator.validateBytes(new Uint8Array(readFileSync(path)), { maxIssues: 20 });
}

const REPORT_KEYS = [
  'input.kind', 'input.bounds', 'input.level', 'sampling.depth', 'sampling.evaluations', 'sampling.denseEvaluations',
  'sampling.surfaceCells', 'mesh.vertices', 'mesh.triangles', 'mesh.watertight', 'mesh.boundaryEdges', 'mesh.nonManifoldEdges',
  'mesh.components', 'mesh.eulerCharacteristic', 'mesh.genus', 'mesh.area', 'mesh.volume', 'timings.total', 'output.path',
  'output.bytes', 'warnings',
];
const get = (o: unknown, path: string) => path.split('.').reduce<unknown>((v, k) => (v as Record<string, unknown> | undefined)?.[k], o);

describe('bake: good input', () => {
  test('the demo recipe becomes a valid GLB (0 errors, 0 warnings) whose triangle count the report states', async () => {
    const out = join(dir, 'lantern.glb');
    const rep = join(dir, 'lantern.json');
    const r = runCli(['bake', 'assets/demo/lantern-post.recipe.json', '--out', out, '--report', rep, '--depth', '6']);
    expect(r.code, r.stderr).toBe(0);
    const v = await validate(out);
    // Source: Khronos glTF-Validator.
    expect(v.issues.numErrors, JSON.stringify(v.issues.messages)).toBe(0);
    expect(v.issues.numWarnings, JSON.stringify(v.issues.messages)).toBe(0);
    const report = JSON.parse(readFileSync(rep, 'utf8'));
    for (const k of REPORT_KEYS) expect(get(report, k), k).not.toBeUndefined();
    expect(report.mesh.watertight).toBe(true);
    expect(report.output.bytes).toBe(readFileSync(out).length);
    expect(v.info.totalTriangleCount).toBe(report.mesh.triangles);
    // Read back with glTF-Transform: one mesh, POSITION/NORMAL/COLOR_0, index count = 3 × triangles.
    const doc = await new NodeIO().readBinary(new Uint8Array(readFileSync(out)));
    const prim = doc.getRoot().listMeshes()[0].listPrimitives()[0];
    expect(prim.getIndices()!.getCount()).toBe(3 * report.mesh.triangles);
    expect(prim.getAttribute('COLOR_0')).not.toBeNull();
    // asset.generator names Fieldkiln (read from the GLB's JSON chunk: glTF-Transform's reader replaces it in memory).
    const glb = readFileSync(out);
    const json = JSON.parse(glb.subarray(20, 20 + glb.readUInt32LE(12)).toString('utf8'));
    expect(json.asset.generator).toMatch(/^Fieldkiln \d+\.\d+\.\d+$/);
    // No temporary files left beside the output.
    expect(readdirSync(dir).filter((f) => f.includes('fieldkiln-tmp'))).toEqual([]);
  });

  test.skipIf(!hasFixtures)('every shared fixture bakes to a validator-clean, watertight GLB', async () => {
    for (const f of ['sphere_sdf.onnx', 'torus_sdf.onnx', 'lantern_density.onnx', 'sphere_sdf_grid64.npy', 'birdbath_sdf_grid128.npy']) {
      const out = join(dir, f + '.glb');
      const rep = join(dir, f + '.json');
      const r = runCli(['bake', fixturePath(f), '--out', out, '--report', rep, '--depth', '6', '--quiet']);
      expect(r.code, `${f}: ${r.stderr}`).toBe(0);
      const v = await validate(out);
      expect(v.issues.numErrors + v.issues.numWarnings, `${f}: ${JSON.stringify(v.issues.messages)}`).toBe(0);
      const report = JSON.parse(readFileSync(rep, 'utf8'));
      expect(report.mesh.watertight, f).toBe(true);
      expect(v.info.totalTriangleCount, f).toBe(report.mesh.triangles);
    }
  });

  test('an existing output is kept unless --overwrite', () => {
    const out = join(dir, 'keep.glb');
    writeFileSync(out, 'precious');
    const r = runCli(['bake', 'assets/demo/market-crate.recipe.json', '--out', out, '--depth', '4']);
    expect(r.code).not.toBe(0);
    expect(r.stderr).toMatch(/already exists.*--overwrite/);
    expect(readFileSync(out, 'utf8')).toBe('precious');
    const r2 = runCli(['bake', 'assets/demo/market-crate.recipe.json', '--out', out, '--depth', '4', '--overwrite']);
    expect(r2.code, r2.stderr).toBe(0);
    expect(readFileSync(out).subarray(0, 4).toString()).toBe('glTF');
  });

  test('inspect prints kind, bounds, outputs and whether a surface was found', () => {
    const r = runCli(['inspect', 'assets/demo/lantern-post.recipe.json', '--json']);
    expect(r.code, r.stderr).toBe(0);
    const info = JSON.parse(r.stdout);
    expect(info.kind).toBe('sdf');
    expect(info.bounds).toHaveLength(6);
    expect(info.outputs).toContain('sdf');
    expect(info.probe.surfaceFound).toBe(true);
    expect(info.probe.valueRange[0]).toBeLessThan(0);
  });
});

describe('bake: bad input gets one clear message and leaves no file', () => {
  const cases: [string, () => string[], RegExp][] = [
    ['missing file', () => [join(dir, 'nope.onnx')], /does not exist|not found|no such/i],
    ['unknown extension', () => [write('field.xyz', 'hello')], /extension|\.xyz/i],
    ['truncated ONNX', () => [writeBytes('half.onnx', readFileSync(fixturePath('sphere_sdf.onnx')).subarray(0, 20000))], /truncated|not a valid ONNX/i],
    ['ONNX with the wrong input', () => [writeBytes('x4.onnx', writeSumModel({ inputName: 'x', width: 4, metadata: { 'field.kind': 'sdf', 'field.bounds': '-1,-1,-1,1,1,1', 'field.units': 'm' } }))], /points.*the model has inputs: x/],
    ['.npy with a bad header', () => { writeSidecar('bad', [4, 4, 4]); return [writeBytes('bad.npy', new Uint8Array([1, 2, 3, 4, 5, 6, 7, 8, 9, 10]))]; }, /magic|not a \.npy|header/i],
    ['.npy whose shape disagrees with its sidecar', () => { writeSidecar('mismatch', [5, 4, 4]); return [writeBytes('mismatch.npy', writeNpyF4([4, 4, 4], new Float32Array(64).fill(1)))]; }, /shape/i],
    ['recipe with an unknown primitive', () => [write('unknown.json', JSON.stringify({ format: 'fieldkiln-recipe', version: 1, root: { type: 'union', children: [{ type: 'sphere', radius: 0.2 }, { type: 'blob', radius: 0.2 }] } }))], /\$\.root\.children\[1\]\.type/],
    ['recipe with a negative radius', () => [write('neg.json', JSON.stringify({ format: 'fieldkiln-recipe', version: 1, root: { type: 'sphere', radius: -0.1 } }))], /\$\.root\.radius/],
    ['field with no surface in its bounds', () => [write('far.json', JSON.stringify({ format: 'fieldkiln-recipe', version: 1, bounds: [-1, -1, -1, 1, 1, 1], root: { type: 'sphere', radius: 0.2, translate: [5, 0, 0] } }))], /no surface/],
  ];
  function write(name: string, text: string) {
    const p = join(dir, name);
    writeFileSync(p, text);
    return p;
  }
  function writeBytes(name: string, bytes: Uint8Array) {
    const p = join(dir, name);
    writeFileSync(p, bytes);
    return p;
  }
  function writeSidecar(base: string, shape: number[]) {
    return write(base + '.json', JSON.stringify({ kind: 'sdf', level: 0, bounds: [-1, -1, -1, 1, 1, 1], units: 'm', shape, axis_order: 'zyx' }));
  }
  for (const [name, make, pattern] of cases) {
    test.skipIf(!hasFixtures && name === 'truncated ONNX')(name, () => {
      const args = make();
      const out = join(dir, `out-${name.replace(/\W+/g, '-')}.glb`);
      const r = runCli(['bake', ...args, '--out', out, '--depth', '5', '--quiet']);
      expect(r.code).not.toBe(0);
      expect(r.stderr).toMatch(pattern);
      // One clear message: a single "error:" line, no stack trace.
      expect(r.stderr.match(/error:/g)?.length).toBe(1);
      expect(r.stderr).not.toMatch(/\n\s+at /);
      expect(existsSync(out)).toBe(false);
    });
  }
  test('usage errors name the option', () => {
    const out = join(dir, 'u.glb');
    expect(runCli(['bake', 'assets/demo/lantern-post.recipe.json', '--out', out, '--depth', '99']).stderr).toMatch(/--depth wants a whole number from 1 to 12/);
    expect(runCli(['bake', 'assets/demo/lantern-post.recipe.json', '--out', out, '--bounds', '1,1,1,0,2,2']).stderr).toMatch(/--bounds: bounds xmin/);
    expect(runCli(['bake', 'assets/demo/lantern-post.recipe.json']).stderr).toMatch(/--out/);
    expect(runCli(['bake', 'assets/demo/lantern-post.recipe.json', '--out', join(dir, 'missing-folder', 'x.glb')]).stderr).toMatch(/folder does not exist/);
    expect(existsSync(out)).toBe(false);
  });
});
void REPO_ROOT;
