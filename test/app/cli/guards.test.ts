/**
 * Guards before and around the real run: the memory estimate refuses plainly (with the estimate and a
 * depth that fits) unless --force; a level outside the field's values is warned about with the range;
 * a failing field worker ends the job with an error naming the stage. Also the remaining file cases.
 */
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';
import { afterAll, describe, expect, test } from 'vitest';
import { CLI, runCli } from '../../helpers/run-cli.js';
import { REPO_ROOT } from '../../helpers/fixtures.js';
import { bakeField } from '../../../core/pipeline/bake-field.js';
import { createRecipeField } from '../../../core/fields/recipe/recipe-field.js';
import { poolField, POOL_MIN_POINTS } from '../../../app/node/field-worker-pool.js';

const dir = mkdtempSync(join(tmpdir(), 'fieldkiln-guard-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const DEMO = 'assets/demo/lantern-post.recipe.json';

describe('resource guard', () => {
  test('refuses a bake whose memory estimate exceeds the free memory, naming the estimate and a depth that fits', () => {
    const out = join(dir, 'big.glb');
    const r = spawnSync(process.execPath, [CLI, 'bake', DEMO, '--depth', '11', '--out', out, '--quiet'], {
      cwd: REPO_ROOT,
      encoding: 'utf8',
      env: { ...process.env, FIELDKILN_FREE_MEMORY: String(300 * 2 ** 20) },
    });
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/depth 11 would need about [\d.]+ GiB of memory \(about [\d.e+]+ field evaluations and [\d.e+]+ triangles before any budget\), more than the 0\.29 GiB free; try --depth \d+, or pass --force/);
    expect(existsSync(out)).toBe(false);
  });

  test('--force runs anyway', () => {
    const out = join(dir, 'forced.glb');
    const r = spawnSync(process.execPath, [CLI, 'bake', DEMO, '--depth', '7', '--out', out, '--force', '--quiet'], {
      cwd: REPO_ROOT,
      encoding: 'utf8',
      env: { ...process.env, FIELDKILN_FREE_MEMORY: '1000' },
    });
    expect(r.status, r.stderr).toBe(0);
    expect(existsSync(out)).toBe(true);
  });
});

describe('level outside the field values', () => {
  test('warns with the range seen, in the report and on stderr', () => {
    const out = join(dir, 'high.glb');
    const rep = join(dir, 'high.json');
    const r = runCli(['bake', DEMO, '--depth', '5', '--level', '5', '--out', out, '--report', rep, '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/warning: level 5 lies outside the values the field takes on a coarse probe \(-?[\d.]+ to [\d.]+\)/);
    expect(JSON.parse(readFileSync(rep, 'utf8')).warnings[0]).toMatch(/level 5 lies outside/);
  });
});

describe('more bad files: one message, no output', () => {
  const cases: [string, () => string, RegExp][] = [
    ['an empty file', () => (writeFileSync(join(dir, 'empty.onnx'), ''), join(dir, 'empty.onnx')), /empty/i],
    ['a directory', () => (mkdirSync(join(dir, 'folder.onnx'), { recursive: true }), join(dir, 'folder.onnx')), /directory|folder|not a (regular )?file/i],
    ['text in a .onnx file', () => (writeFileSync(join(dir, 'notes.onnx'), 'just some notes\n'), join(dir, 'notes.onnx')), /not a valid ONNX model/],
    ['binary in a .json recipe', () => (writeFileSync(join(dir, 'blob.json'), new Uint8Array([0, 159, 146, 150, 255])), join(dir, 'blob.json')), /not a recipe|UTF-8|JSON/i],
  ];
  for (const [name, make, pattern] of cases) {
    test(name, () => {
      const out = join(dir, `o-${name.replace(/\W+/g, '-')}.glb`);
      const r = runCli(['bake', make(), '--out', out, '--depth', '4', '--quiet']);
      expect(r.code).not.toBe(0);
      expect(r.stderr).toMatch(pattern);
      expect(r.stderr.match(/error:/g)?.length).toBe(1);
      expect(existsSync(out)).toBe(false);
    });
  }
  test('a budget below 4 triangles is refused by name', () => {
    const r = runCli(['bake', DEMO, '--out', join(dir, 'b.glb'), '--budget', '3']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--budget wants a whole number from 4/);
  });
});

describe('a failing field worker', () => {
  for (const mode of ['throw', 'crash'] as const) {
    test(`(${mode}) ends the bake with an error naming the stage, not a hang`, async () => {
      const text = readFileSync(join(REPO_ROOT, DEMO), 'utf8');
      const field = poolField(createRecipeField(text, 'x.json'), { source: 'failing', mode }, 2);
      try {
        // Depth 8 asks for more than POOL_MIN_POINTS at once while sampling, so the workers are used there.
        expect(POOL_MIN_POINTS).toBeLessThan(20_000);
        await expect(bakeField(field, { depth: 8 })).rejects.toThrow(/^the sample stage failed: a field worker (failed|stopped unexpectedly)/);
      } finally {
        await field.dispose?.();
      }
    });
  }
});

describe('an output folder that cannot be written', () => {
  /** Makes `path` read-only: chmod for a normal user; for root (who ignores modes) the immutable flag. Returns an undo, or null. */
  function makeReadOnly(path: string): (() => void) | null {
    if (process.getuid?.() !== 0) {
      spawnSync('chmod', ['555', path]);
      return () => spawnSync('chmod', ['755', path]);
    }
    const r = spawnSync('chattr', ['+i', path]);
    return r.status === 0 ? () => spawnSync('chattr', ['-i', path]) : null;
  }

  test('is refused before any work, with the folder named, and nothing is written', (ctx) => {
    const ro = join(dir, 'read-only');
    mkdirSync(ro);
    const undo = makeReadOnly(ro);
    if (!undo) ctx.skip(); // neither chmod nor chattr can make a folder read-only here
    try {
      const r = runCli(['bake', DEMO, '--out', join(ro, 'x.glb'), '--depth', '4', '--quiet']);
      expect(r.code).toBe(1);
      expect(r.stderr).toMatch(/output folder is not writable: .*read-only/);
    } finally {
      undo!();
    }
    expect(existsSync(join(ro, 'x.glb'))).toBe(false);
  });
});
