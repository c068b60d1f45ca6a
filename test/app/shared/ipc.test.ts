/** The IPC contract: channel names, limits pinned to core, and each validator on readable cases. */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { SAMPLE_OCTREE_DEFAULTS } from '../../../core/sampling/sample-octree.js';
import { MESHING_METHODS } from '../../../core/pipeline/bake-field.js';
import { EXPORT_FORMATS as CORE_EXPORT_FORMATS } from '../../../core/export/export-mesh.js';
import { TEXTURE_DEFAULTS } from '../../../core/texture/bake-textures.js';
import {
  CHANNELS,
  EVENTS,
  EXPORT_FORMATS,
  LIMITS,
  VALIDATORS,
  validateBakeRequest,
  validateEmpty,
  validateExportRequest,
  validateOpenPath,
  type BakeRequest,
  type ExportRequest,
} from '../../../app/shared/ipc.js';
import { repoRoot } from '../app-build.js';

const goodBake: BakeRequest = { quality: 'full', level: 0, depth: 7, method: 'marching-cubes', budget: 0, lods: 0, minPart: 0, normals: 'field', bounds: null, lipschitz: null, startDepth: null, nonfinite: 'error' };
const goodExport: ExportRequest = {
  settings: { level: 0, depth: 7, method: 'marching-cubes', budget: 0, lods: 0, minPart: 0, normals: 'field', bounds: null, lipschitz: null, startDepth: null, nonfinite: 'error' },
  format: 'glb',
  colors: true,
  quantize: false,
  meshopt: false,
  name: 'lantern-post',
  lod: 0,
};

describe('channels', () => {
  it('are unique, namespaced, and each has a validator', () => {
    const names = [...Object.values(CHANNELS), ...Object.values(EVENTS)];
    expect(new Set(names).size).toBe(names.length);
    for (const n of names) expect(n).toMatch(/^fieldkiln:[a-z-]+$/);
    expect(Object.keys(VALIDATORS).sort()).toEqual(Object.values(CHANNELS).sort());
  });

  it('are spelled the same in the preload, which cannot import them', () => {
    const preload = readFileSync(path.join(repoRoot, 'app', 'preload', 'preload.cts'), 'utf8');
    for (const [key, value] of [...Object.entries(CHANNELS), ...Object.entries(EVENTS)]) expect(preload).toContain(`${key}: '${value}'`);
    expect(preload).not.toMatch(/exposeInMainWorld\([^)]*ipcRenderer\s*\)/);
    expect(preload.match(/exposeInMainWorld/g)).toHaveLength(1);
  });
});

describe('limits', () => {
  it("match core's depth range", () => {
    expect(LIMITS.minDepth).toBe(SAMPLE_OCTREE_DEFAULTS.minDepth);
    expect(LIMITS.maxDepth).toBe(SAMPLE_OCTREE_DEFAULTS.maxDepth);
  });
  it("match core's texture size range", () => {
    expect(LIMITS.minTextureSize).toBe(TEXTURE_DEFAULTS.minSize);
    expect(LIMITS.maxTextureSize).toBe(TEXTURE_DEFAULTS.maxSize);
  });
  it("offer exactly core's export formats", () => {
    expect([...EXPORT_FORMATS]).toEqual([...CORE_EXPORT_FORMATS]);
  });
  it("admit every meshing method core has (the validator checks the shape of the name; core checks the name)", () => {
    for (const m of MESHING_METHODS) expect(validateBakeRequest({ ...goodBake, method: m })).toBeNull();
  });
});

describe('validators', () => {
  it('accept good payloads', () => {
    expect(validateEmpty({})).toBeNull();
    expect(validateEmpty(Object.create(null))).toBeNull();
    expect(validateOpenPath({ path: '/home/ana/fields/ball.onnx' })).toBeNull();
    expect(validateOpenPath({ path: 'C:\\fields\\ball.onnx' })).toBeNull();
    expect(validateBakeRequest(goodBake)).toBeNull();
    expect(validateBakeRequest({ ...goodBake, quality: 'preview', level: -0.05, depth: 12, budget: 5000, lods: 3, minPart: 0.01 })).toBeNull();
    expect(validateBakeRequest({ ...goodBake, bounds: [-1, -1, -1, 1, 1, 1], lipschitz: 1.5, startDepth: 4, nonfinite: 'outside' })).toBeNull();
    expect(validateExportRequest(goodExport)).toBeNull();
  });

  it('name what is wrong', () => {
    expect(validateEmpty(null)).toBe('payload must be an object');
    expect(validateEmpty([])).toBe('payload must be an object');
    expect(validateEmpty({ x: 1 })).toBe("payload has an unexpected key 'x'");
    expect(validateEmpty(new Date())).toBe('payload must be a plain object');
    expect(validateOpenPath({ path: 'relative/ball.onnx' })).toBe('path must be absolute');
    expect(validateOpenPath({ path: '/a\u0000b' })).toBe('path must not contain control characters');
    expect(validateOpenPath({ path: '/' + 'a'.repeat(LIMITS.maxPathLength) })).toBe(`path is longer than ${LIMITS.maxPathLength} characters`);
    expect(validateBakeRequest({ ...goodBake, quality: 'best' })).toBe("quality must be 'preview' or 'full'");
    expect(validateBakeRequest({ ...goodBake, level: NaN })).toBe('level must be a finite number');
    expect(validateBakeRequest({ ...goodBake, level: '0' })).toBe('level must be a finite number');
    expect(validateBakeRequest({ ...goodBake, level: 1e12 })).toBe('level must be within ±1000000000');
    expect(validateBakeRequest({ ...goodBake, depth: 13 })).toBe('depth must be a whole number from 1 to 12');
    expect(validateBakeRequest({ ...goodBake, depth: 7.5 })).toBe('depth must be a whole number from 1 to 12');
    expect(validateBakeRequest({ ...goodBake, method: 'Marching Cubes' })).toBe('method must be a lower-case name such as marching-cubes');
    expect(validateBakeRequest({ ...goodBake, budget: -1 })).toBe('budget must be a whole number from 0 to 50000000');
    expect(validateBakeRequest({ ...goodBake, minPart: 2 })).toBe('minPart must be a number from 0 to 1');
    expect(validateBakeRequest({ ...goodBake, bounds: [0, 0, 0, 1, 1] })).toBe('bounds must be null or six numbers xmin,ymin,zmin,xmax,ymax,zmax');
    expect(validateBakeRequest({ ...goodBake, bounds: [0, 0, 0, 1, 0, 1] })).toBe('bounds ymin must be below ymax');
    expect(validateBakeRequest({ ...goodBake, bounds: [0, 0, 0, 1, 1, 2e6] })).toBe('bounds value 6 must be a finite number within ±1000000 m');
    expect(validateBakeRequest({ ...goodBake, lipschitz: 0 })).toBe('lipschitz must be null or a number above 0 and at most 1000000');
    expect(validateBakeRequest({ ...goodBake, startDepth: 13 })).toBe('startDepth must be a whole number from 0 to 12');
    expect(validateBakeRequest({ ...goodBake, nonfinite: 'ignore' })).toBe("nonfinite must be 'error' or 'outside'");
    const { lods: _lods, ...noLods } = goodBake;
    expect(validateBakeRequest(noLods)).toBe("payload is missing 'lods'");
    expect(validateExportRequest({ ...goodExport, format: 'fbx' })).toBe('format must be one of: glb, gltf, ply, stl, obj');
    expect(validateExportRequest({ ...goodExport, meshopt: 'yes' })).toBe('meshopt must be true or false');
    expect(validateBakeRequest({ ...goodBake, normals: 'smooth' })).toBe("normals must be 'field' or 'mesh'");
    expect(validateExportRequest({ ...goodExport, name: ' ' })).toBe('name must not be empty');
    expect(validateExportRequest({ ...goodExport, name: 'x'.repeat(65) })).toBe('name is longer than 64 characters');
    expect(validateExportRequest({ ...goodExport, colors: 1 })).toBe('colors must be true or false');
    expect(validateExportRequest({ ...goodExport, settings: { ...goodExport.settings, depth: 0 } })).toBe('settings: depth must be a whole number from 1 to 12');
    expect(validateExportRequest({ ...goodExport, settings: null })).toBe('settings must be an object');
  });

  it('accept texture sizes that are powers of two in range, or null, and a collision flag', () => {
    // Powers of two from 64 to 4096: core's TEXTURE_DEFAULTS range (core/texture/bake-textures.ts).
    for (const texture of [null, 64, 128, 512, 1024, 2048, 4096]) {
      for (const collision of [false, true]) expect(validateExportRequest({ ...goodExport, texture, collision })).toBeNull();
    }
    // Either may be left out (windows and scripts that predate them send neither).
    expect(validateExportRequest({ ...goodExport, texture: 512 })).toBeNull();
    expect(validateExportRequest({ ...goodExport, collision: true })).toBeNull();
  });

  it('refuse texture sizes and collision flags that are not', () => {
    const sizeWords = 'texture must be null or a power of two from 64 to 4096 texels, such as 512 or 1024';
    // 32 and 8192 lie outside the range; 1000, 768 and 3 are not powers of two; 512.5 is not whole.
    for (const texture of [0, 32, 8192, 1000, 768, 3, 512.5, -512, NaN, Infinity, '512', true, undefined, [512], { size: 512 }]) {
      expect(validateExportRequest({ ...goodExport, texture }), String(texture)).toBe(sizeWords);
    }
    for (const collision of [1, 0, 'true', null, undefined, {}]) {
      expect(validateExportRequest({ ...goodExport, texture: null, collision }), String(collision)).toBe('collision must be true or false');
    }
    expect(validateExportRequest({ ...goodExport, textures: 512 })).toBe("payload has an unexpected key 'textures'");
  });

  it('refuse a __proto__ key smuggled in through JSON', () => {
    const payload = JSON.parse('{"path": "/x.onnx", "__proto__": {"polluted": true}}');
    expect(validateOpenPath(payload)).toBe("payload has an unexpected key '__proto__'");
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
  });
});
