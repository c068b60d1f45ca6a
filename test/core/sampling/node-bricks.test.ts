/** The sampler's sparse node store: every node gets its own slot, found again, and maps back to its coordinates. */
import { expect, test } from 'vitest';
import { NodeBricks, NODE_UNKNOWN } from '../../../core/sampling/node-bricks.js';
import { rng } from '../../helpers/expect-mesh.js';

test('slots are distinct per node, stable across growth, and map back to their node', () => {
  const dims: [number, number, number] = [4097, 300, 77]; // depth-12 width, uneven other axes
  const store = new NodeBricks(dims);
  const rand = rng(7);
  const nodes: [number, number, number][] = [];
  const slots = new Map<number, string>();
  for (let n = 0; n < 20000; n++) {
    const p: [number, number, number] = [Math.floor(rand() * dims[0]), Math.floor(rand() * dims[1]), Math.floor(rand() * dims[2])];
    nodes.push(p);
    const s = store.slot(...p);
    const key = p.join(',');
    const prev = slots.get(s);
    if (prev !== undefined) expect(prev).toBe(key); // a slot is never shared by two nodes
    slots.set(s, key);
    store.vals[s] = p[0] + 0.5;
  }
  const out = new Int32Array(3);
  for (const p of nodes) {
    const s = store.find(...p);
    expect(s).toBeGreaterThanOrEqual(0);
    expect(store.slot(...p)).toBe(s);
    expect(store.vals[s]).toBe(p[0] + 0.5); // survived every growth of the pools
    store.coordsOf(s, out);
    expect(Array.from(out)).toEqual(p);
  }
  expect(store.find(dims[0] - 1, dims[1] - 1, dims[2] - 1) === -1 || store.state[store.find(dims[0] - 1, dims[1] - 1, dims[2] - 1)] === NODE_UNKNOWN).toBe(true);
});
