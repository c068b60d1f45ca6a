/**
 * The IPC gate: untrusted senders and invalid payloads never reach a handler. Fuzzed with a few
 * hundred seeded payloads, each one good payload with one thing made definitely wrong (a wrong type,
 * an oversize or out-of-range value, a missing or extra key, a non-object), bound to the REAL
 * handlers: none is called and the set of user-chosen paths stays as it was.
 */
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { guardRequest } from '../../../app/main/guard-request.js';
import { createHandlers, handlerTable } from '../../../app/main/handlers.js';
import { CHANNELS, LIMITS, type Channel, type Reply } from '../../../app/shared/ipc.js';
import { rng } from '../../helpers/expect-mesh.js';

const settings = { level: 0, depth: 7, method: 'marching-cubes', budget: 0, lods: 0, minPart: 0, normals: 'field', bounds: null, lipschitz: null, startDepth: null, nonfinite: 'error' };
const GOOD: Record<Channel, () => Record<string, unknown>> = {
  [CHANNELS.openStartup]: () => ({}),
  [CHANNELS.openDialog]: () => ({}),
  [CHANNELS.cancel]: () => ({}),
  [CHANNELS.openDropped]: () => ({ path: '/home/ana/fields/ball.onnx' }),
  [CHANNELS.openRecent]: () => ({ path: '/home/ana/fields/ball.onnx' }),
  [CHANNELS.bake]: () => ({ quality: 'preview', ...settings }),
  [CHANNELS.exportMesh]: () => ({ settings: { ...settings }, format: 'glb', colors: true, quantize: false, meshopt: false, name: 'post', lod: 0 }),
};

const long = (n: number) => 'a'.repeat(n);
/** Values that are wrong for each key, whatever else the payload holds. */
const WRONG: Record<string, unknown[]> = {
  path: ['', 'relative/ball.onnx', `/${long(LIMITS.maxPathLength + 1)}`, 7, null, undefined, '/a\u0000b', ['/x'], { p: '/x' }],
  quality: ['best', '', 7, null, true],
  level: [NaN, Infinity, -Infinity, '0', null, undefined, {}, [], true, 1e300, -1e10, 10n],
  depth: [0, 13, -1, 7.5, NaN, '7', null, 2 ** 53, 1e9],
  method: ['', 'Marching-Cubes', long(LIMITS.maxMethodLength + 1), 7, null, 'marching cubes', '-x'],
  budget: [-1, 0.5, LIMITS.maxBudget + 1, 1e15, NaN, '5000', null],
  lods: [-1, LIMITS.maxLods + 1, 1.5, '2', null],
  minPart: [-0.1, 1.5, NaN, Infinity, '0', null],
  settings: [null, [], 'x', 7, { ...settings, extra: 1 }, { ...settings, depth: 99 }],
  format: ['obj', '', null, 'GLB', 1],
  colors: [1, 0, 'true', null, undefined],
  name: ['', '  ', long(LIMITS.maxNameLength + 1), 7, null, 'a\nb', 'tab\there'],
  lod: [-1, LIMITS.maxLods + 1, 0.5, '0', null],
  bounds: [[0, 0, 0, 1, 1], [0, 0, 0, 0, 1, 1], [0, 0, 0, 1, 1, NaN], [0, 0, 0, 1, 1, 1e7], 'x', {}, [[0, 0, 0], [1, 1, 1]], undefined],
  lipschitz: [0, -1, NaN, '1', 1e7, undefined],
  startDepth: [-1, LIMITS.maxDepth + 1, 1.5, '5', undefined],
  nonfinite: ['ignore', '', null, true, 'Outside'],
  normals: ['smooth', '', null, 1, 'Field'],
  quantize: [1, 'true', null, undefined],
  meshopt: [0, 'false', null, {}],
};
const NOT_OBJECTS: unknown[] = [null, undefined, 0, 42, 'payload', true, [], [{}], new Date(0), new Uint8Array(8), () => 1, Symbol('x'), new Map()];

/** One definitely-invalid payload for `channel`. */
function badPayload(channel: Channel, r: () => number): unknown {
  const pick = <T>(xs: T[]): T => xs[Math.floor(r() * xs.length)];
  const good = GOOD[channel]();
  const keys = Object.keys(good);
  const kind = Math.floor(r() * 5);
  if (kind === 0 || keys.length === 0) {
    if (keys.length === 0 && r() < 0.5) return { [pick(['x', 'path', 'constructor', 'level'])]: pick([1, '/x', null]) };
    return pick(NOT_OBJECTS);
  }
  if (kind === 1) {
    delete good[pick(keys)];
    return good;
  }
  if (kind === 2) {
    good[pick(['extra', 'toString', 'constructor', 'then', long(50)])] = pick([1, 'x', null, {}]);
    return good;
  }
  if (kind === 3) return JSON.parse(JSON.stringify({ ...good, level: undefined }).replace(/^\{/, '{"__proto__":{"polluted":true},'));
  const key = pick(keys);
  good[key] = pick(WRONG[key]);
  return good;
}

/** A random good payload for `channel`. */
function goodPayload(channel: Channel, r: () => number): Record<string, unknown> {
  const p = GOOD[channel]();
  const s = {
    level: (r() - 0.5) * 2,
    depth: 1 + Math.floor(r() * 12),
    method: 'marching-cubes',
    budget: Math.floor(r() * 100_000),
    lods: Math.floor(r() * 9),
    minPart: r(),
    normals: r() < 0.5 ? 'field' : 'mesh',
    bounds: r() < 0.5 ? null : [-r(), -r(), -r(), r() + 0.01, r() + 0.01, r() + 0.01],
    lipschitz: r() < 0.5 ? null : 0.5 + 3 * r(),
    startDepth: r() < 0.5 ? null : Math.floor(r() * 13),
    nonfinite: r() < 0.5 ? 'error' : 'outside',
  };
  if (channel === CHANNELS.bake) return { ...s, quality: r() < 0.5 ? 'preview' : 'full' };
  if (channel === CHANNELS.exportMesh) {
    const format = ['glb', 'gltf', 'ply', 'stl', 'obj'][Math.floor(r() * 5)];
    return { ...p, settings: s, format, colors: r() < 0.5, quantize: r() < 0.5, meshopt: r() < 0.5, name: `mesh-${Math.floor(r() * 1000)}`, lod: Math.floor(r() * 9) };
  }
  if ('path' in p) return { path: `/fields/${Math.floor(r() * 1e6)}.onnx` };
  return p;
}

function show(p: unknown): string {
  try {
    return String(JSON.stringify(p)).slice(0, 200);
  } catch {
    return String(p);
  }
}

describe('guardRequest', () => {
  it('never passes a bad payload to the real handlers: 490 seeded cases, no calls, no paths granted', async () => {
    const demoPath = path.resolve('/nonexistent-fieldkiln-demo/demo.recipe.json');
    const handlers = createHandlers({
      demoPath,
      workerPath: '/nonexistent-fieldkiln-worker.js', // would fail loudly if any handler started work
      emit: () => {},
      chooseOpenPath: async () => {
        throw new Error('no dialog may open');
      },
      chooseSavePath: async () => {
        throw new Error('no dialog may open');
      },
    });
    const table = handlerTable(handlers);
    const calls: string[] = [];
    const r = rng(20261202);
    let cases = 0;
    for (const channel of Object.values(CHANNELS)) {
      const real = table[channel];
      const gated = guardRequest(channel, (async (payload: never) => {
        calls.push(channel);
        return real(payload);
      }) as (payload: never) => Promise<Reply<unknown>>);
      for (let i = 0; i < 70; i++) {
        const payload = badPayload(channel, r);
        const reply = await gated(true, payload);
        cases++;
        expect(reply.ok, `${channel} ${show(payload)}`).toBe(false);
        expect(!reply.ok && reply.error.startsWith('refused: ')).toBe(true);
      }
    }
    expect(cases).toBe(490);
    expect(calls).toEqual([]);
    expect(handlers.grants.list('read')).toEqual([demoPath]);
    expect(handlers.grants.list('write')).toEqual([]);
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
    await handlers.dispose();
  });

  it('passes good payloads through unchanged, once each: 210 seeded cases', async () => {
    const r = rng(7);
    for (const channel of Object.values(CHANNELS)) {
      const seen: unknown[] = [];
      const gated = guardRequest(channel, (async (payload: never) => {
        seen.push(payload);
        return { ok: true, value: null };
      }) as (payload: never) => Promise<Reply<unknown>>);
      for (let i = 0; i < 30; i++) {
        const payload = goodPayload(channel, r);
        expect(await gated(true, payload)).toEqual({ ok: true, value: null });
        expect(seen[seen.length - 1]).toBe(payload);
      }
      expect(seen).toHaveLength(30);
    }
  });

  it('refuses an untrusted sender before looking at the payload', async () => {
    let called = false;
    const gated = guardRequest(CHANNELS.cancel, (async () => {
      called = true;
      return { ok: true, value: null };
    }) as (payload: never) => Promise<Reply<unknown>>);
    expect(await gated(false, {})).toEqual({ ok: false, error: 'refused: the request did not come from the Fieldkiln window' });
    expect(called).toBe(false);
  });

  it('turns a handler that throws into a plain reply', async () => {
    const gated = guardRequest(CHANNELS.cancel, (async () => {
      throw new Error('boom');
    }) as (payload: never) => Promise<Reply<unknown>>);
    expect(await gated(true, {})).toEqual({ ok: false, error: 'something went wrong inside Fieldkiln: boom' });
  });
});
