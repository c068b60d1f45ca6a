/**
 * `fieldkiln bake` with the game-ready options: --budget, --lods, --min-part, --normals, --format (or
 * the --out extension), --quantize, --meshopt; the report keys they add; clear usage errors.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import validator from 'gltf-validator';
import { runCli } from '../../helpers/run-cli.js';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fieldkiln-bake-shaping-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const RECIPE = 'assets/demo/lantern-post.recipe.json';
const get = (o: unknown, path: string) => path.split('.').reduce<unknown>((v, k) => (v as Record<string, unknown> | undefined)?.[k], o);

describe('bake: budget, LODs and formats', () => {
  test('--budget --lods --quantize: a validator-clean GLB and the report keys for every level', async () => {
    const out = join(dir, 'l.glb');
    const rep = join(dir, 'l.json');
    const r = runCli(['bake', RECIPE, '--out', out, '--report', rep, '--depth', '6', '--budget', '3000', '--lods', '2', '--quantize', '--min-part', '0.001', '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/triangles: base \d+ \(max error [\d.]+ mm\), LOD1 \d+/);
    const report = JSON.parse(readFileSync(rep, 'utf8'));
    for (const k of [
      'decimation.targetTriangles', 'decimation.triangles', 'decimation.maxError', 'lods.0.triangles', 'lods.0.maxError', 'lods.1.triangles',
      'cleanup.minPart', 'cleanup.smallParts.parts', 'cleanup.smallParts.triangles', 'cleanup.smallParts.area', 'cleanup.degenerateTriangles.remaining',
      'timings.cleanup', 'timings.decimate', 'timings.bake', 'mesh.watertight', 'mesh.genus', 'output.bytes',
    ]) expect(get(report, k), k).not.toBeUndefined();
    expect(report.decimation.targetTriangles).toBe(3000);
    expect(report.decimation.triangles).toBeLessThanOrEqual(3000);
    expect(report.lods[0].triangles).toBeLessThanOrEqual(Math.floor(report.decimation.triangles / 2));
    expect(report.output.format).toBe('glb');
    const v = await validator.validateBytes(new Uint8Array(readFileSync(out)), { maxIssues: 20 });
    // Source: Khronos glTF-Validator.
    expect(v.issues.numErrors + v.issues.numWarnings, JSON.stringify(v.issues.messages)).toBe(0);
    expect(v.info.extensionsUsed).toContain('KHR_mesh_quantization');
    expect(v.info.totalTriangleCount).toBe(report.decimation.triangles + report.lods[0].triangles + report.lods[1].triangles);
  });

  test('the format follows --out (.stl, .obj, .ply, .gltf) or --format', () => {
    const cases: [string[], string][] = [
      [['--out', join(dir, 'a.stl')], 'stl'],
      [['--out', join(dir, 'a.ply')], 'ply'],
      [['--out', join(dir, 'a.gltf')], 'gltf'],
      [['--out', join(dir, 'a.mesh'), '--format', 'obj'], 'obj'],
    ];
    for (const [args, format] of cases) {
      const rep = join(dir, `${format}.json`);
      const r = runCli(['bake', RECIPE, ...args, '--report', rep, '--depth', '5', '--quiet', '--overwrite']);
      expect(r.code, `${format}: ${r.stderr}`).toBe(0);
      expect(JSON.parse(readFileSync(rep, 'utf8')).output.format).toBe(format);
      // And the file passes `fieldkiln check` (which picks the reader by extension).
      if (!args[1].endsWith('.mesh')) expect(runCli(['check', args[1]]).code, format).toBe(0);
    }
    expect(readFileSync(join(dir, 'a.mesh'), 'utf8')).toMatch(/^# Fieldkiln/);
  });

  test('usage errors name the option, and nothing is written', () => {
    const out = join(dir, 'bad.glb');
    const cases: [string[], RegExp][] = [
      [['--out', out, '--budget', '2'], /--budget wants a whole number from 4/],
      [['--out', out, '--min-part', '1.5'], /--min-part wants a fraction from 0 to 1/],
      [['--out', out, '--lods=17'], /--lods wants a whole number from 0 to 16/],
      [['--out', out, '--normals', 'smooth'], /--normals wants one of field, mesh/],
      [['--out', join(dir, 'x.stl'), '--format', 'glb'], /--format glb disagrees with --out's extension '\.stl'/],
      [['--out', join(dir, 'x.fbx')], /--out must end in \.glb, \.gltf, \.ply, \.stl, \.obj, or give --format/],
    ];
    for (const [args, pattern] of cases) {
      const r = runCli(['bake', RECIPE, ...args, '--depth', '4', '--quiet']);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr).toMatch(pattern);
    }
    expect(existsSync(out)).toBe(false);
    expect(existsSync(join(dir, 'x.stl'))).toBe(false);
  });
});
