/**
 * Seeded fuzzing of the three input formats: a few hundred mutations of a valid `.npy` grid, a valid
 * recipe and a valid ONNX model (bytes flipped, cut, inserted; JSON values swapped for wrong ones).
 * Every run must end in a mesh or a FieldkilnError (a clean message), never another exception, a
 * hang, or a file left behind.
 */
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, test } from 'vitest';
import { openField } from '../../../app/fields/open-field.js';
import { writeFileAtomic } from '../../../app/node/atomic-write.js';
import { bakeField } from '../../../core/pipeline/bake-field.js';
import { FieldkilnError } from '../../../core/types.js';
import { rng } from '../../helpers/expect-mesh.js';
import { writeNpyF4 } from '../../helpers/npy-writer.js';
import { fixturePath, hasFixtures } from '../../helpers/fixtures.js';

const dir = mkdtempSync(join(tmpdir(), 'fieldkiln-fuzz-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

type Outcome = 'mesh' | 'error';

async function runOne(path: string, out: string): Promise<Outcome> {
  const work = (async (): Promise<Outcome> => {
    let field;
    try {
      field = await openField(path, {}, { workers: 1 });
      const { glb } = await bakeField(field, { depth: 4 });
      writeFileAtomic(out, glb!);
      return 'mesh';
    } catch (e) {
      if (e instanceof FieldkilnError) return 'error';
      throw new Error(`not a clean error for ${path}: ${(e as Error)?.stack ?? String(e)}`);
    } finally {
      await field?.dispose?.();
    }
  })();
  const timeout = new Promise<never>((_, reject) => setTimeout(() => reject(new Error(`hang: ${path} took over 20 s`)), 20_000));
  return Promise.race([work, timeout]);
}

function mutateBytes(src: Uint8Array, r: () => number): Uint8Array {
  const kind = Math.floor(r() * 4);
  const b = new Uint8Array(src);
  if (kind === 0) {
    const n = 1 + Math.floor(r() * 8);
    for (let i = 0; i < n; i++) b[Math.floor(r() * b.length)] = Math.floor(r() * 256);
    return b;
  }
  if (kind === 1) return b.subarray(0, Math.floor(r() * b.length));
  if (kind === 2) {
    const at = Math.floor(r() * b.length);
    const ins = Uint8Array.from({ length: 1 + Math.floor(r() * 16) }, () => Math.floor(r() * 256));
    return Uint8Array.from([...b.subarray(0, at), ...ins, ...b.subarray(at)]);
  }
  // Header region: flip bytes among the first 160.
  for (let i = 0; i < 3; i++) b[Math.floor(r() * Math.min(160, b.length))] = Math.floor(r() * 256);
  return b;
}

const WRONG_VALUES: unknown[] = [-1, 0, 1e308, -1e-9, 'x', null, true, [], {}, [1, 2], [0, 0, 0], NaN, '0.2', { type: 'sphere' }];

function mutateJson(src: unknown, r: () => number): unknown {
  const copy = JSON.parse(JSON.stringify(src));
  const paths: { parent: Record<string, unknown> | unknown[]; key: string | number }[] = [];
  const walk = (v: unknown) => {
    if (Array.isArray(v)) v.forEach((x, i) => (paths.push({ parent: v, key: i }), walk(x)));
    else if (v && typeof v === 'object') for (const [k, x] of Object.entries(v)) (paths.push({ parent: v as Record<string, unknown>, key: k }), walk(x));
  };
  walk(copy);
  const n = 1 + Math.floor(r() * 3);
  for (let i = 0; i < n; i++) {
    const p = paths[Math.floor(r() * paths.length)];
    const choice = r();
    if (choice < 0.7) (p.parent as Record<string | number, unknown>)[p.key] = WRONG_VALUES[Math.floor(r() * WRONG_VALUES.length)];
    else if (choice < 0.85 && !Array.isArray(p.parent)) delete (p.parent as Record<string, unknown>)[p.key as string];
    else (p.parent as Record<string | number, unknown>)[p.key] = { type: 'union', children: [{ type: 'sphere', radius: 0.1 }, { type: 'torus', majorRadius: 0.1, minorRadius: 0.3 }] };
  }
  return copy;
}

function expectNoLeftovers(): void {
  expect(readdirSync(dir).filter((f) => f.includes('fieldkiln-tmp'))).toEqual([]);
}

describe('fuzzing the inputs (seeded)', () => {
  test('200 mutated .npy grids end in a mesh or a clean error', async () => {
    const n = 12;
    const vals = new Float32Array(n ** 3);
    for (let k = 0; k < n; k++) for (let j = 0; j < n; j++) for (let i = 0; i < n; i++) vals[i + n * (j + n * k)] = Math.hypot(i - 5.5, j - 5.5, k - 5.5) / 5.5 - 0.6;
    const npy = writeNpyF4([n, n, n], vals);
    const sidecar = { kind: 'sdf', level: 0, bounds: [-1, -1, -1, 1, 1, 1], units: 'm', shape: [n, n, n], axis_order: 'zyx' };
    const r = rng(2026);
    const tally = { mesh: 0, error: 0 };
    for (let c = 0; c < 200; c++) {
      const base = join(dir, `g${c}`);
      const mutateSidecar = r() < 0.3;
      writeFileSync(base + '.npy', mutateSidecar ? npy : mutateBytes(npy, r));
      writeFileSync(base + '.json', JSON.stringify(mutateSidecar ? mutateJson(sidecar, r) : sidecar));
      const out = base + '.glb';
      const o = await runOne(base + '.npy', out);
      tally[o]++;
      if (o === 'error') expect(existsSync(out)).toBe(false);
    }
    console.log(`npy fuzz: ${tally.mesh} meshes, ${tally.error} clean errors`);
    expect(tally.error).toBeGreaterThan(50);
    expectNoLeftovers();
  });

  test('200 mutated recipes end in a mesh or a clean error', async () => {
    const recipe = {
      format: 'fieldkiln-recipe', version: 1, name: 'fuzz', bounds: [-0.6, -0.6, -0.6, 0.6, 0.6, 0.6],
      root: { type: 'smoothUnion', blend: 0.05, children: [{ type: 'sphere', radius: 0.3, color: [1, 0, 0] }, { type: 'box', size: [0.5, 0.2, 0.2], translate: [0.2, 0, 0], rotate: { axis: [0, 1, 0], degrees: 20 } }, { type: 'torus', majorRadius: 0.3, minorRadius: 0.05 }] },
    };
    const text = JSON.stringify(recipe, null, 1);
    const r = rng(7);
    const tally = { mesh: 0, error: 0 };
    for (let c = 0; c < 200; c++) {
      const p = join(dir, `r${c}.json`);
      const bytes = r() < 0.5 ? new TextEncoder().encode(JSON.stringify(mutateJson(recipe, r))) : mutateBytes(new TextEncoder().encode(text), r);
      writeFileSync(p, bytes);
      const out = join(dir, `r${c}.glb`);
      const o = await runOne(p, out);
      tally[o]++;
      if (o === 'error') expect(existsSync(out)).toBe(false);
    }
    console.log(`recipe fuzz: ${tally.mesh} meshes, ${tally.error} clean errors`);
    expect(tally.error).toBeGreaterThan(50);
    expectNoLeftovers();
  });

  test.skipIf(!hasFixtures)('100 mutated ONNX models end in a mesh or a clean error', async () => {
    const onnx = new Uint8Array(readFileSync(fixturePath('sphere_sdf.onnx')));
    const r = rng(99);
    const tally = { mesh: 0, error: 0 };
    for (let c = 0; c < 100; c++) {
      const p = join(dir, `m${c}.onnx`);
      writeFileSync(p, mutateBytes(onnx, r));
      const out = join(dir, `m${c}.glb`);
      const o = await runOne(p, out);
      tally[o]++;
      if (o === 'error') expect(existsSync(out)).toBe(false);
    }
    console.log(`onnx fuzz: ${tally.mesh} meshes, ${tally.error} clean errors`);
    expect(tally.error).toBeGreaterThan(20);
    expectNoLeftovers();
  });
});
