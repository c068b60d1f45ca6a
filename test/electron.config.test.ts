/** The desktop app's build and packaging configuration. */
import { existsSync, readdirSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ELECTRON_CONFIG, ONNX_RUNTIME_BINARIES, onnxRuntimeExcludes, packageFiles } from '../electron.config.js';

const repoRoot = path.resolve(import.meta.dirname, '..');
const napi = path.join(repoRoot, 'node_modules', 'onnxruntime-node', 'bin', 'napi-v6');

describe('electron.config', () => {
  it('lists exactly the native folders onnxruntime-node ships (bin/napi-v6/<platform>/<arch>)', () => {
    const shipped = readdirSync(napi).flatMap((platform) => readdirSync(path.join(napi, platform)).map((arch) => `${platform}/${arch}`));
    expect(ONNX_RUNTIME_BINARIES.map((b) => `${b.platform}/${b.arch}`).sort()).toEqual(shipped.sort());
  });

  it('a linux-x64 package leaves out the other four platforms and keeps its own', () => {
    const ex = onnxRuntimeExcludes({ platform: 'linux', arch: 'x64' });
    expect(ex).toHaveLength(4);
    expect(ex).toContain('!node_modules/onnxruntime-node/bin/napi-v6/darwin/arm64/**');
    expect(ex).toContain('!node_modules/onnxruntime-node/bin/napi-v6/linux/arm64/**');
    expect(ex.join()).not.toContain('linux/x64');
    expect(packageFiles({ platform: 'linux', arch: 'x64' })).toEqual([...ELECTRON_CONFIG.files, ...ex]);
  });

  it("names entry points whose sources exist, and the demo field", () => {
    const src = (built: string) => built.replace(/^build\//, '').replace(/\.cjs$/, '.cts').replace(/\.js$/, '.ts');
    for (const entry of [ELECTRON_CONFIG.entry.main, ELECTRON_CONFIG.entry.preload, ELECTRON_CONFIG.entry.worker]) {
      expect(entry.startsWith(`${ELECTRON_CONFIG.outDir}/`), entry).toBe(true);
      expect(existsSync(path.join(repoRoot, src(entry))), entry).toBe(true);
    }
    expect(existsSync(path.join(repoRoot, ELECTRON_CONFIG.entry.renderer))).toBe(true);
    expect(existsSync(path.join(repoRoot, ELECTRON_CONFIG.demoField))).toBe(true);
    expect(ELECTRON_CONFIG).toMatchObject({ appId: 'app.fieldkiln.desktop', productName: 'Fieldkiln' });
  });
});
