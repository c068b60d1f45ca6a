/**
 * Renders GLB files with three.js in headless Chromium (Debian's, through playwright-core; the launch
 * flags of `test/app/renderer/window-harness.ts`, from ../shared/DEPENDENCIES.md §7) and compares
 * the images in the page. Each model is drawn alone, from the same cameras, with the same lights,
 * materials as the file says (GLTFLoader), no antialiasing, transparent background. The mean
 * per-pixel difference (0..255, mean of |ΔR|, |ΔG|, |ΔB|) is taken over the pixels every model
 * covers (alpha), less a band of 2 pixels along each silhouette: silhouettes are geometry, which
 * texture maps cannot change, and the test is about shading. A heat map of each difference (4×
 * gain) is returned with the images.
 */
import { existsSync, readFileSync } from 'node:fs';
import http from 'node:http';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { CHROMIUM_ARGS, chromiumPath } from '../../app/renderer/window-harness.js';
import { REPO_ROOT } from '../../helpers/fixtures.js';

export { chromiumPath };
export const hasChromium = existsSync(chromiumPath);

const THREE_DIR = path.join(REPO_ROOT, 'node_modules', 'three');

const PAGE = `<!doctype html><html><head><meta charset="utf-8">
<script type="importmap">{"imports":{"three":"/three/build/three.module.js","three/addons/":"/three/examples/jsm/"}}</script>
</head><body style="margin:0;background:#000">
<script type="module">
import * as THREE from 'three';
import { GLTFLoader } from 'three/addons/loaders/GLTFLoader.js';
const W = 384, H = 384, ERODE = 2;
const renderer = new THREE.WebGLRenderer({ antialias: false, alpha: true, preserveDrawingBuffer: true });
renderer.setPixelRatio(1);
renderer.setSize(W, H);
renderer.setClearColor(0x000000, 0);
document.body.appendChild(renderer.domElement);
const gl = renderer.getContext();
const loader = new GLTFLoader();
const models = {};
window.loadModel = async (name, url) => {
  const gltf = await loader.loadAsync(url);
  models[name] = gltf.scene;
  return true;
};
/** Renders every model from every view; returns per view the images (data URLs) and the mean difference of each model to the reference. */
window.renderViews = (reference, others) => {
  const box = new THREE.Box3().setFromObject(models[reference]);
  const centre = box.getCenter(new THREE.Vector3());
  const radius = box.getSize(new THREE.Vector3()).length() / 2;
  const views = [[1,0,0],[-1,0,0],[0,1,0],[0,-1,0],[0,0,1],[0,0,-1]];
  const out = [];
  for (const v of views) {
    const dir = new THREE.Vector3(...v);
    const camera = new THREE.PerspectiveCamera(30, W / H, radius * 0.1, radius * 10);
    camera.position.copy(centre).addScaledVector(dir, radius / Math.sin((15 * Math.PI) / 180) * 1.02);
    camera.up.set(...(Math.abs(v[1]) === 1 ? [0, 0, -1] : [0, 1, 0]));
    camera.lookAt(centre);
    camera.updateMatrixWorld();
    // A key light from above-left of the camera, so relief shows as shading; a weak fill.
    const right = new THREE.Vector3().setFromMatrixColumn(camera.matrixWorld, 0);
    const up = new THREE.Vector3().setFromMatrixColumn(camera.matrixWorld, 1);
    const key = new THREE.DirectionalLight(0xffffff, 2.2);
    key.position.copy(centre).addScaledVector(dir, radius).addScaledVector(up, radius * 0.8).addScaledVector(right, -radius * 0.8);
    key.target.position.copy(centre);
    const fill = new THREE.HemisphereLight(0xffffff, 0x404040, 0.5);
    const images = {}, pixels = {};
    for (const name of [reference, ...others]) {
      const scene = new THREE.Scene();
      scene.add(key, key.target, fill, models[name]);
      renderer.render(scene, camera);
      const buf = new Uint8Array(W * H * 4);
      gl.readPixels(0, 0, W, H, gl.RGBA, gl.UNSIGNED_BYTE, buf);
      pixels[name] = buf;
      images[name] = renderer.domElement.toDataURL('image/png');
    }
    const diffs = {};
    const ref = pixels[reference];
    // Pixels every model covers, less a band of ERODE pixels along any silhouette.
    const inside = new Uint8Array(W * H);
    for (let i = 0; i < W * H; i++) inside[i] = [reference, ...others].every((n) => pixels[n][4 * i + 3] !== 0) ? 1 : 0;
    const keep = new Uint8Array(W * H);
    for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) {
      let ok = 1;
      for (let dy = -ERODE; dy <= ERODE && ok; dy++) for (let dx = -ERODE; dx <= ERODE; dx++) {
        const xx = x + dx, yy = y + dy;
        if (xx < 0 || yy < 0 || xx >= W || yy >= H || !inside[yy * W + xx]) { ok = 0; break; }
      }
      keep[y * W + x] = ok;
    }
    const canvas = document.createElement('canvas');
    canvas.width = W;
    canvas.height = H;
    const g = canvas.getContext('2d');
    for (const name of others) {
      const px = pixels[name];
      const heat = g.createImageData(W, H);
      let sum = 0, n = 0;
      for (let i = 0; i < W * H; i++) {
        if (!keep[i]) continue;
        const d = (Math.abs(ref[4 * i] - px[4 * i]) + Math.abs(ref[4 * i + 1] - px[4 * i + 1]) + Math.abs(ref[4 * i + 2] - px[4 * i + 2])) / 3;
        sum += d;
        n++;
        // Heat map, flipped to image rows (readPixels starts at the bottom), 4× gain.
        const o = 4 * ((H - 1 - Math.floor(i / W)) * W + (i % W));
        heat.data[o] = heat.data[o + 1] = heat.data[o + 2] = Math.min(255, 4 * d);
        heat.data[o + 3] = 255;
      }
      g.putImageData(heat, 0, 0);
      images[name + '-difference'] = canvas.toDataURL('image/png');
      diffs[name] = { mean: sum / n, pixels: n };
    }
    out.push({ view: v.join(','), images, diffs });
  }
  return out;
};
window.ready = true;
</script></body></html>`;

/** One view's result: the images (PNG data URLs) by model name and each model's mean difference to the reference (0..255 per channel). */
export interface RenderedView {
  view: string;
  images: Record<string, string>;
  diffs: Record<string, { mean: number; pixels: number }>;
}

/** A page that can load GLB bytes by name and render them. */
export interface GlbRenderer {
  load(name: string, glb: Uint8Array): Promise<void>;
  renderViews(reference: string, others: string[]): Promise<RenderedView[]>;
  close(): Promise<void>;
}

/** Starts the server and Chromium, and opens the rendering page. */
export async function startGlbRenderer(): Promise<GlbRenderer> {
  const files = new Map<string, Uint8Array>();
  const server = http.createServer((req, res) => {
    const url = new URL(req.url ?? '/', 'http://127.0.0.1');
    if (url.pathname === '/') return res.writeHead(200, { 'content-type': 'text/html' }).end(PAGE);
    if (url.pathname.startsWith('/model/')) {
      const bytes = files.get(url.pathname.slice('/model/'.length));
      if (!bytes) return res.writeHead(404).end();
      return res.writeHead(200, { 'content-type': 'model/gltf-binary' }).end(bytes);
    }
    if (url.pathname.startsWith('/three/')) {
      const file = path.join(THREE_DIR, url.pathname.slice('/three/'.length));
      if (!file.startsWith(THREE_DIR) || !existsSync(file)) return res.writeHead(404).end();
      return res.writeHead(200, { 'content-type': 'text/javascript' }).end(readFileSync(file));
    }
    res.writeHead(404).end();
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const port = (server.address() as { port: number }).port;
  const profile = mkdtempSync(path.join(tmpdir(), 'fieldkiln-render-'));
  const context: BrowserContext = await chromium.launchPersistentContext(profile, { executablePath: chromiumPath, headless: true, args: CHROMIUM_ARGS });
  const page: Page = await context.newPage();
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(e.message));
  await page.goto(`http://127.0.0.1:${port}/`);
  await page.waitForFunction(() => (window as unknown as { ready?: boolean }).ready === true, undefined, { timeout: 30_000 });
  return {
    async load(name, glb) {
      files.set(name, glb);
      await page.evaluate(([n, u]) => (window as unknown as { loadModel(a: string, b: string): Promise<boolean> }).loadModel(n, u), [name, `/model/${name}`]);
      if (errors.length) throw new Error(errors.join('; '));
    },
    async renderViews(reference, others) {
      const r = await page.evaluate(
        ([ref, oth]) => (window as unknown as { renderViews(a: string, b: string[]): RenderedView[] }).renderViews(ref as string, oth as string[]),
        [reference, others] as const,
      );
      if (errors.length) throw new Error(errors.join('; '));
      return r;
    },
    async close() {
      await context.close();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      rmSync(profile, { recursive: true, force: true });
    },
  };
}
