#!/usr/bin/env node
/**
 * Samples a Fieldkiln recipe (signed distance in metres and linear-RGB color) for fitting a neural field.
 * It evaluates the recipe with Fieldkiln's own evaluator from the build, so the training targets are exactly
 * the field that `fieldkiln bake <recipe>` meshes. Run `npm run build` first.
 *
 *   node assets/demo/neural/sample_recipe.mjs assets/demo/round-stool.recipe.json --out /tmp/samples [--seed 8]
 *
 * Writes into --out (created if missing), all little-endian float32, C order:
 *   <set>_points.f32 [n,3] world metres, <set>_sdf.f32 [n], <set>_color.f32 [n,3]
 * for these sets:
 *   uniform   uniform in the recipe's bounds grown by 2 % per side (the space the network must be right in)
 *   surface   points on the zero level set (Newton-projected, |sdf| < 1e-5 m), for the training loss
 *   near      surface points moved by Gaussian noise, sigma 2, 8 and 30 mm in equal thirds
 *   test      a second, independent set of surface points, only for measuring the fit
 * and samples.json with the counts, the seed and the bounds. The same arguments give the same bytes.
 */
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { basename, join, resolve, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';

const REPO_ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..', '..');

const { values, positionals } = parseArgs({
  allowPositionals: true,
  options: {
    out: { type: 'string' },
    seed: { type: 'string', default: '8' },
    uniform: { type: 'string', default: '200000' },
    surface: { type: 'string', default: '150000' },
    test: { type: 'string', default: '50000' },
  },
});
if (positionals.length !== 1 || !values.out) {
  process.stderr.write('usage: node sample_recipe.mjs <recipe.json> --out <dir> [--seed n] [--uniform n] [--surface n] [--test n]\n');
  process.exit(2);
}
const count = (name) => {
  const n = Number(values[name]);
  if (!Number.isInteger(n) || n < 1) throw new Error(`sample_recipe: --${name} must be a positive integer (got ${values[name]})`);
  return n;
};

let createRecipeField;
try {
  ({ createRecipeField } = await import(join(REPO_ROOT, 'build', 'core', 'fields', 'recipe', 'recipe-field.js')));
} catch {
  process.stderr.write('sample_recipe: build/ is missing or stale; run `npm run build` first\n');
  process.exit(2);
}

/** mulberry32: a small seeded 32-bit PRNG, returns floats in [0, 1). */
function makeRandom(seed) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal samples by Box–Muller. */
function makeGauss(random) {
  return () => {
    const u = 1 - random();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * random());
  };
}

const recipePath = positionals[0];
const field = createRecipeField(readFileSync(recipePath, 'utf8'), basename(recipePath));
const [x0, y0, z0, x1, y1, z1] = field.bounds;
const grow = 0.02;
const lo = [x0 - grow * (x1 - x0), y0 - grow * (y1 - y0), z0 - grow * (z1 - z0)];
const hi = [x1 + grow * (x1 - x0), y1 + grow * (y1 - y0), z1 + grow * (z1 - z0)];
const seed = Number(values.seed);

function uniformPoints(n, random) {
  const p = new Float32Array(3 * n);
  for (let i = 0; i < n; i++) for (let a = 0; a < 3; a++) p[3 * i + a] = lo[a] + (hi[a] - lo[a]) * random();
  return p;
}

/** Central-difference gradient of the recipe's SDF at each point (3 floats per point). */
async function gradient(points, h = 1e-4) {
  const n = points.length / 3;
  const probe = new Float32Array(3 * n * 6);
  for (let i = 0; i < n; i++)
    for (let k = 0; k < 6; k++) {
      const o = 3 * (6 * i + k);
      probe.set(points.subarray(3 * i, 3 * i + 3), o);
      probe[o + (k >> 1)] += k & 1 ? -h : h;
    }
  const d = await field.evaluate(probe);
  const g = new Float32Array(3 * n);
  for (let i = 0; i < n; i++) for (let a = 0; a < 3; a++) g[3 * i + a] = (d[6 * i + 2 * a] - d[6 * i + 2 * a + 1]) / (2 * h);
  return g;
}

/** n points on the zero level set: uniform candidates within 2 cm of it, projected by Newton steps p -= d·∇d/|∇d|². */
async function surfacePoints(n, random) {
  const out = new Float32Array(3 * n);
  let filled = 0;
  while (filled < n) {
    let p = uniformPoints(200000, random);
    let d = await field.evaluate(p);
    const keep = [];
    for (let i = 0; i < d.length; i++) if (Math.abs(d[i]) < 0.02) keep.push(i);
    p = Float32Array.from(keep.flatMap((i) => [p[3 * i], p[3 * i + 1], p[3 * i + 2]]));
    for (let it = 0; it < 10; it++) {
      d = await field.evaluate(p);
      const g = await gradient(p);
      for (let i = 0; i < d.length; i++) {
        const gg = g[3 * i] ** 2 + g[3 * i + 1] ** 2 + g[3 * i + 2] ** 2;
        if (gg > 1e-12) for (let a = 0; a < 3; a++) p[3 * i + a] -= (d[i] * g[3 * i + a]) / gg;
      }
    }
    d = await field.evaluate(p);
    for (let i = 0; i < d.length && filled < n; i++) {
      const inside = p[3 * i] >= x0 && p[3 * i] <= x1 && p[3 * i + 1] >= y0 && p[3 * i + 1] <= y1 && p[3 * i + 2] >= z0 && p[3 * i + 2] <= z1;
      if (Math.abs(d[i]) < 1e-5 && inside) out.set(p.subarray(3 * i, 3 * i + 3), 3 * filled++);
    }
  }
  return out;
}

async function writeSet(dir, name, points) {
  const sdf = await field.evaluate(points);
  const color = await field.evaluateColor(points);
  const bytes = (a) => new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
  writeFileSync(join(dir, `${name}_points.f32`), bytes(points));
  writeFileSync(join(dir, `${name}_sdf.f32`), bytes(sdf));
  writeFileSync(join(dir, `${name}_color.f32`), bytes(color));
  return points.length / 3;
}

const dir = resolve(values.out);
mkdirSync(dir, { recursive: true });
const random = makeRandom(seed);
const gauss = makeGauss(random);
const counts = {};
counts.uniform = await writeSet(dir, 'uniform', uniformPoints(count('uniform'), random));
const surface = await surfacePoints(count('surface'), random);
counts.surface = await writeSet(dir, 'surface', surface);
const near = new Float32Array(surface.length);
const sigmas = [0.002, 0.008, 0.03];
for (let i = 0; i < surface.length / 3; i++) {
  const s = sigmas[i % 3];
  for (let a = 0; a < 3; a++) near[3 * i + a] = surface[3 * i + a] + s * gauss();
}
counts.near = await writeSet(dir, 'near', near);
// The test set comes from its own seed, so it is independent of the training points.
counts.test = await writeSet(dir, 'test', await surfacePoints(count('test'), makeRandom(seed + 1000)));
const info = { recipe: basename(recipePath), seed, bounds: field.bounds, sampledBounds: [...lo, ...hi], nearSigmasM: sigmas, counts };
writeFileSync(join(dir, 'samples.json'), JSON.stringify(info, null, 2) + '\n');
process.stdout.write(JSON.stringify(info) + '\n');
