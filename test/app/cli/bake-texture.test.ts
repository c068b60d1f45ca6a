/**
 * `fieldkiln bake --texture <size> --collision` end to end, as a user runs it: validator-clean GLB
 * files (Khronos glTF-Validator, 0 errors and 0 warnings), the report's texture.* and collision.*
 * keys beside every existing one, `fieldkiln check` passing on the textured file, and for bad input
 * one clear message and a non-zero exit.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import validator from 'gltf-validator';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { runCli } from '../../helpers/run-cli.js';
import { ensureAppBuild } from '../app-build.js';
import { groovedColumnRecipe } from '../../core/texture/grooved-recipe.js';

let dir: string;
let recipe: string;
beforeAll(async () => {
  await ensureAppBuild();
  dir = mkdtempSync(join(tmpdir(), 'fieldkiln-texture-cli-'));
  recipe = join(dir, 'grooved-column.recipe.json');
  writeFileSync(recipe, groovedColumnRecipe());
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const get = (o: unknown, path: string) => path.split('.').reduce<unknown>((v, k) => (v as Record<string, unknown> | undefined)?.[k], o);

// The keys bake.test.ts promises, and the new ones.
const REPORT_KEYS = [
  'input.kind', 'input.bounds', 'input.level', 'sampling.depth', 'sampling.evaluations', 'mesh.vertices', 'mesh.triangles', 'mesh.watertight',
  'mesh.genus', 'decimation.triangles', 'colors.baked', 'checks', 'timings.total', 'output.path', 'output.bytes', 'warnings',
  'texture.size', 'texture.charts', 'texture.coverage', 'texture.stretch', 'texture.bakeSeconds', 'collision.triangles', 'collision.vertices',
];

describe('bake --texture --collision', () => {
  for (const extra of [[], ['--quantize']]) {
    test(`a valid GLB (0 errors, 0 warnings) with the report's texture and collision figures${extra.length ? ' (' + extra.join(' ') + ')' : ''}`, async () => {
      const out = join(dir, `column${extra.join('')}.glb`);
      const rep = join(dir, `column${extra.join('')}.json`);
      const r = runCli(['bake', recipe, '--depth', '6', '--budget', '1500', '--texture', '256', '--collision', ...extra, '--out', out, '--report', rep, '--quiet']);
      expect(r.code, r.stderr).toBe(0);
      const v = await validator.validateBytes(new Uint8Array(readFileSync(out)), { maxIssues: 20 });
      // Source: Khronos glTF-Validator.
      expect(v.issues.numErrors, JSON.stringify(v.issues.messages)).toBe(0);
      expect(v.issues.numWarnings, JSON.stringify(v.issues.messages)).toBe(0);
      const report = JSON.parse(readFileSync(rep, 'utf8'));
      for (const k of REPORT_KEYS) expect(get(report, k), k).not.toBeUndefined();
      expect(report.texture.size).toBe(256);
      expect(report.texture.coverage).toBeGreaterThan(0);
      expect(report.texture.coverage).toBeLessThan(1);
      expect(report.texture.stretch).toBeGreaterThanOrEqual(1);
      expect(report.collision.node).toBe('fieldkiln-mesh_collision');
      // The validator counts the base level's triangles plus the hull's.
      expect(v.info.totalTriangleCount).toBe(report.mesh.triangles + report.collision.triangles);
      expect(r.stdout).toMatch(/texture: 256×256, \d+ charts, [\d.]+% of texels covered, stretch [\d.]+/);
      expect(r.stdout).toMatch(new RegExp(`collision: fieldkiln-mesh_collision, ${report.collision.triangles} triangles`));
      // `fieldkiln check` reads the file back (UV seams weld by position) and every check passes on both meshes.
      const c = runCli(['check', out]);
      expect(c.code, c.stdout + c.stderr).toBe(0);
      expect(c.stdout).toMatch(/mesh 'fieldkiln-mesh_collision'/);
    });
  }

  test('without the options the report says null for both', () => {
    const out = join(dir, 'plain.glb');
    const rep = join(dir, 'plain.json');
    const r = runCli(['bake', recipe, '--depth', '5', '--out', out, '--report', rep, '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    const report = JSON.parse(readFileSync(rep, 'utf8'));
    expect(report.texture).toBeNull();
    expect(report.collision).toBeNull();
  });

  test('PLY output: textures and the hull are skipped with a warning, and the file is still written', () => {
    const out = join(dir, 'column.ply');
    const r = runCli(['bake', recipe, '--depth', '5', '--texture', '128', '--collision', '--out', out, '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/--texture applies to glTF and GLB only/);
    expect(r.stderr).toMatch(/--collision applies to glTF and GLB only/);
    expect(existsSync(out)).toBe(true);
  });
});

describe('bad input', () => {
  test('a size that is not a power of two, or out of range: usage error (exit 2) naming the option', () => {
    const out = join(dir, 'bad.glb');
    const a = runCli(['bake', recipe, '--texture', '300', '--out', out]);
    expect(a.code).toBe(2);
    expect(a.stderr).toMatch(/--texture wants a power of two such as 512, 1024 or 2048 \(got '300'\)/);
    const b = runCli(['bake', recipe, '--texture', '8192', '--out', out]);
    expect(b.code).toBe(2);
    expect(b.stderr).toMatch(/--texture wants a whole number from 64 to 4096/);
    expect(existsSync(out)).toBe(false);
  });

  test('a mesh too large to unwrap (no budget): exit 1, the message names the limit and --budget, no file', () => {
    const out = join(dir, 'huge.glb');
    const r = runCli(['bake', recipe, '--depth', '7', '--texture', '256', '--out', out, '--quiet']);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/texture baking lays out UVs for at most 50000 triangles and this mesh has \d+; give a triangle budget \(--budget\)/);
    expect(existsSync(out)).toBe(false);
  });
});
