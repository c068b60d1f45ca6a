/** The app protocol's URL → file mapping: what it serves, and that nothing else is reachable. */
import { existsSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { contentTypeOf, resolveAppAsset } from '../../../app/main/app-assets.js';
import { repoRoot } from '../app-build.js';

const root = '/opt/fieldkiln';

describe('resolveAppAsset', () => {
  it('serves the page and styles from the source, scripts from the build, three from node_modules', () => {
    expect(resolveAppAsset('/renderer/index.html', root)).toBe('/opt/fieldkiln/app/renderer/index.html');
    expect(resolveAppAsset('/renderer/style.css', root)).toBe('/opt/fieldkiln/app/renderer/style.css');
    expect(resolveAppAsset('/renderer/renderer.js', root)).toBe('/opt/fieldkiln/build/app/renderer/renderer.js');
    expect(resolveAppAsset('/vendor/three/three.module.js', root)).toBe('/opt/fieldkiln/node_modules/three/build/three.module.js');
    expect(resolveAppAsset('/vendor/three/addons/controls/OrbitControls.js', root)).toBe('/opt/fieldkiln/node_modules/three/examples/jsm/controls/OrbitControls.js');
  });
  it('the import map targets exist in this checkout (three 0.187 layout)', () => {
    for (const url of ['/vendor/three/three.module.js', '/vendor/three/three.core.js', '/vendor/three/addons/controls/OrbitControls.js', '/renderer/index.html']) {
      expect(existsSync(resolveAppAsset(url, repoRoot)!), url).toBe(true);
    }
  });
  it('refuses traversal, other folders, other file types and odd characters', () => {
    for (const url of [
      '/renderer/../../package.json',
      '/renderer/%2e%2e/secret.js',
      '/vendor/three/../../onnxruntime-node/index.js',
      '/build/app/main/main.js',
      '/app/main/main.ts',
      '/renderer/index.ts',
      '/renderer/sub/page.html',
      '/vendor/three/package.json',
      '/vendor/other/x.js',
      '/renderer/.hidden.js',
      'renderer/index.html',
      '/',
      '',
      '/renderer/a b.js',
      `/renderer/${'a'.repeat(400)}.js`,
    ]) {
      expect(resolveAppAsset(url, root), url).toBeNull();
    }
  });
  it('names content types by extension', () => {
    expect(contentTypeOf('x.js')).toBe('text/javascript; charset=utf-8');
    expect(contentTypeOf(path.join('a', 'b.HTML'))).toBe('text/html; charset=utf-8');
    expect(contentTypeOf('x.bin')).toBe('application/octet-stream');
  });
});
