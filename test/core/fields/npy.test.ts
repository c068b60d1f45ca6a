import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, test } from 'vitest';
import { parseNpy } from '../../../core/fields/npy.js';
import { FieldkilnError } from '../../../core/types.js';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..');
const fixtures = path.resolve(repoRoot, '../shared/fixtures');

/**
 * Builds a .npy file the way numpy.lib.format writes it (NEP 1): magic, version, header length
 * (uint16 LE for v1, uint32 LE for v2/v3), the dict header padded with spaces and ending in '\n'
 * so the data starts at a multiple of 64, then the raw data.
 */
function npy(header: string, data: Uint8Array, version = 1, opts: { claimedLength?: number } = {}): Uint8Array {
  const pre = version === 1 ? 10 : 12;
  let h = header;
  const total = pre + h.length + 1;
  h += ' '.repeat((64 - (total % 64)) % 64) + '\n';
  const hb = new TextEncoder().encode(h);
  const out = new Uint8Array(pre + hb.length + data.length);
  out.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, version, 0]);
  const len = opts.claimedLength ?? hb.length;
  const dv = new DataView(out.buffer);
  if (version === 1) dv.setUint16(8, len, true);
  else dv.setUint32(8, len, true);
  out.set(hb, pre);
  out.set(data, pre + hb.length);
  return out;
}

function f4(values: number[]): Uint8Array {
  return new Uint8Array(new Float32Array(values).buffer);
}

function expectNpyError(bytes: Uint8Array, ...parts: (string | RegExp)[]): void {
  let caught: unknown;
  try {
    parseNpy(bytes, 'g.npy');
  } catch (e) {
    caught = e;
  }
  expect(caught).toBeInstanceOf(FieldkilnError);
  const msg = (caught as Error).message;
  expect(msg.startsWith('g.npy: ')).toBe(true);
  for (const p of parts) expect(msg).toMatch(p);
}

describe('parseNpy', () => {
  test('reads a v1 <f4 array in C order', () => {
    // 2x3 array [[1,2,3],[4,5,6]] in C order is 1..6 in memory (NEP 1: C order unless fortran_order).
    const r = parseNpy(npy("{'descr': '<f4', 'fortran_order': False, 'shape': (2, 3), }", f4([1, 2, 3, 4, 5, 6])), 'g.npy');
    expect(r.shape).toEqual([2, 3]);
    expect(r.dtype).toBe('<f4');
    expect(Array.from(r.data)).toEqual([1, 2, 3, 4, 5, 6]);
  });

  test('the header is padded so the data starts at a multiple of 64 (NEP 1), and it is read from there', () => {
    const bytes = npy("{'descr': '<f4', 'fortran_order': False, 'shape': (1,), }", f4([7.5]));
    expect((bytes.length - 4) % 64).toBe(0);
    expect(Array.from(parseNpy(bytes, 'g.npy').data)).toEqual([7.5]);
  });

  test('converts <f8 to float32 (each value rounded with Math.fround)', () => {
    const vals = [0.1, -1e-3, 123456.789, 1 / 3];
    const r = parseNpy(npy("{'descr': '<f8', 'fortran_order': False, 'shape': (4,), }", new Uint8Array(new Float64Array(vals).buffer)), 'g.npy');
    expect(r.data).toBeInstanceOf(Float32Array);
    expect(r.dtype).toBe('<f8');
    // Rounding a double to float32 is exactly Math.fround (ECMAScript spec, Float32Array conversion).
    expect(Array.from(r.data)).toEqual(vals.map(Math.fround));
  });

  test('reads a v2 header (uint32 header length at bytes 8..11)', () => {
    const r = parseNpy(npy("{'descr': '<f4', 'fortran_order': False, 'shape': (2, 2), }", f4([1, 2, 3, 4]), 2), 'g.npy');
    expect(r.shape).toEqual([2, 2]);
    expect(Array.from(r.data)).toEqual([1, 2, 3, 4]);
  });

  test('reads a v3 header (UTF-8)', () => {
    const r = parseNpy(npy("{'descr': '<f4', 'fortran_order': False, 'shape': (2,), }", f4([1, 2]), 3), 'g.npy');
    expect(Array.from(r.data)).toEqual([1, 2]);
  });

  test("accepts '|f4' and a 0-d array (shape ())", () => {
    const r = parseNpy(npy("{'descr': '|f4', 'fortran_order': False, 'shape': (), }", f4([3])), 'g.npy');
    expect(r.shape).toEqual([]);
    expect(Array.from(r.data)).toEqual([3]);
  });

  test('reads the shared 64³ fixture grid: shape [64,64,64], <f4, first sample = sidecar probe', () => {
    const r = parseNpy(new Uint8Array(readFileSync(path.join(fixtures, 'sphere_sdf_grid64.npy'))), 'sphere_sdf_grid64.npy');
    expect(r.shape).toEqual([64, 64, 64]);
    expect(r.dtype).toBe('<f4');
    // Source: sphere_sdf_grid64.json probes, index [0,0,0] → value 0.799038112.
    expect(Math.abs(r.data[0] - 0.799038112)).toBeLessThan(1e-6);
  });

  describe('errors name the file and the problem', () => {
    const good = "{'descr': '<f4', 'fortran_order': False, 'shape': (2,), }";

    test('bad magic', () => {
      const b = npy(good, f4([1, 2]));
      b[1] = 0x58;
      expectNpyError(b, /magic/);
      expectNpyError(new TextEncoder().encode('hello'), /magic/);
    });

    test('truncated header (header length past the end of the file)', () => {
      expectNpyError(npy(good, new Uint8Array(0), 1, { claimedLength: 5000 }), /truncated/);
      expectNpyError(npy(good, f4([1, 2])).subarray(0, 8), /truncated/);
    });

    test('garbled header (not a dict)', () => {
      expectNpyError(npy('descr <f4 shape 2', f4([1, 2])), /garbled/);
    });

    test('header dict missing keys', () => {
      expectNpyError(npy("{'descr': '<f4', 'shape': (2,), }", f4([1, 2])), /'fortran_order'/);
      expectNpyError(npy("{'fortran_order': False, }", f4([1, 2])), /'descr'/, /'shape'/);
    });

    test('unsupported dtype: names it and lists the supported ones', () => {
      expectNpyError(npy("{'descr': '<i4', 'fortran_order': False, 'shape': (2,), }", f4([1, 2])), /'<i4'/, /<f4/, /<f8/);
    });

    test('Fortran order', () => {
      expectNpyError(npy("{'descr': '<f4', 'fortran_order': True, 'shape': (2, 2), }", f4([1, 2, 3, 4])), /Fortran/);
    });

    test('big-endian >f4', () => {
      expectNpyError(npy("{'descr': '>f4', 'fortran_order': False, 'shape': (2,), }", f4([1, 2])), /big-endian/, /'>f4'/);
    });

    test('data shorter than the shape implies', () => {
      expectNpyError(npy("{'descr': '<f4', 'fortran_order': False, 'shape': (3,), }", f4([1, 2])), /shorter/, /12 bytes/, /has 8/);
    });

    test('data longer than the shape implies', () => {
      expectNpyError(npy("{'descr': '<f4', 'fortran_order': False, 'shape': (1,), }", f4([1, 2])), /longer/);
    });

    test('unknown format version', () => {
      const b = npy(good, f4([1, 2]));
      b[6] = 9;
      expectNpyError(b, /version 9\.0/);
    });
  });
});
