/**
 * The 3D preview (three.js): the mesh lit from its own normals, optional vertex colors and
 * wireframe, the field's bounds as a box, open and non-manifold edges in a loud highlight drawn on
 * top of everything, orbit / pan / zoom, and frame-the-object. Renders only when something changed.
 */
import * as THREE from 'three';
import { OrbitControls } from 'three/addons/controls/OrbitControls.js';
import type { Bounds } from '../../core/types.js';
import type { MeshPayload } from '../shared/ipc.js';

/** Highlight colors of the problem edges (sRGB hex): hot pink for open edges, electric cyan for edges shared by three or more triangles. */
export const FLAW_COLORS = { open: 0xff2e9a, nonManifold: 0x22e6ff } as const;

/** Color of a mesh without vertex colors, or with them switched off: a warm unfired clay. */
const CLAY = 0xc9beb1;
const BACKGROUND = 0x1b1c21;

export interface Viewport {
  /** Replaces the mesh. `frame`: also aim the camera at it (a new field). */
  showMesh(mesh: MeshPayload, frame: boolean): void;
  /** Edges to highlight, 6 floats per edge. */
  showProblemEdges(open: Float32Array, nonManifold: Float32Array): void;
  /** The field's bounds, metres. */
  showBounds(bounds: Bounds): void;
  setColors(on: boolean): void;
  setWireframe(on: boolean): void;
  setBoundsVisible(on: boolean): void;
  setFlawsVisible(on: boolean): void;
  /** Aims the camera so the whole mesh (else the bounds) fills the view. */
  frame(): void;
}

/**
 * Creates the preview on `canvas`, sized to `container`.
 *
 * @example
 * const view = createViewport(document.querySelector('canvas')!, document.querySelector('main')!);
 * view.showMesh(result.mesh, true);
 */
export function createViewport(canvas: HTMLCanvasElement, container: HTMLElement): Viewport {
  // preserveDrawingBuffer keeps the last frame readable (screenshots, the window's tests).
  const renderer = new THREE.WebGLRenderer({ canvas, antialias: true, preserveDrawingBuffer: true });
  renderer.setPixelRatio(Math.min(window.devicePixelRatio || 1, 2));
  const scene = new THREE.Scene();
  scene.background = new THREE.Color(BACKGROUND);
  const camera = new THREE.PerspectiveCamera(35, 1, 0.01, 100);
  camera.position.set(1.6, 1.1, 2.1);
  const controls = new OrbitControls(camera, canvas);
  controls.enableDamping = false;
  controls.screenSpacePanning = true;

  // Light: a sky/ground fill, a warm key that follows the camera (so the side facing you is lit
  // whichever way you orbit), and a cool rim from behind.
  scene.add(new THREE.HemisphereLight(0xf2ede6, 0x2a2622, 1.4));
  const key = new THREE.DirectionalLight(0xfff1e0, 2.4);
  key.position.set(-1, 1.4, 1.2);
  camera.add(key);
  scene.add(camera);
  const rim = new THREE.DirectionalLight(0xbcd4ff, 0.9);
  rim.position.set(2, 1, -3);
  scene.add(rim);

  const surface = new THREE.MeshStandardMaterial({
    color: 0xffffff,
    roughness: 0.62,
    metalness: 0,
    vertexColors: true,
    polygonOffset: true,
    polygonOffsetFactor: 1,
    polygonOffsetUnits: 1,
  });
  const wire = new THREE.MeshBasicMaterial({ color: 0x0b0b0d, wireframe: true, transparent: true, opacity: 0.32, depthWrite: false });
  let geometry = new THREE.BufferGeometry();
  const solid = new THREE.Mesh(geometry, surface);
  const wireMesh = new THREE.Mesh(geometry, wire);
  wireMesh.visible = false;
  wireMesh.renderOrder = 1;
  scene.add(solid, wireMesh);

  const boundsBox = new THREE.Box3Helper(new THREE.Box3(), new THREE.Color(0xff9a4d));
  (boundsBox.material as THREE.LineBasicMaterial).transparent = true;
  (boundsBox.material as THREE.LineBasicMaterial).opacity = 0.55;
  boundsBox.visible = false;
  scene.add(boundsBox);
  let grid: THREE.GridHelper | undefined;

  const flaws = new THREE.Group();
  flaws.renderOrder = 10;
  scene.add(flaws);

  let hasColors = false;
  let colorsOn = true;
  let boundsOn = true;
  let bounds: Bounds | undefined;
  let pending = false;

  const render = () => {
    pending = false;
    renderer.render(scene, camera);
  };
  const requestRender = () => {
    if (!pending) {
      pending = true;
      requestAnimationFrame(render);
    }
  };
  controls.addEventListener('change', requestRender);

  const resize = () => {
    const w = Math.max(1, container.clientWidth);
    const h = Math.max(1, container.clientHeight);
    renderer.setSize(w, h, false);
    camera.aspect = w / h;
    camera.updateProjectionMatrix();
    requestRender();
  };
  new ResizeObserver(resize).observe(container);
  resize();

  const applyColors = () => {
    const use = colorsOn && hasColors;
    surface.vertexColors = use;
    surface.color.set(use ? 0xffffff : CLAY);
    surface.needsUpdate = true;
  };

  const sphereOfView = (): THREE.Sphere | undefined => {
    geometry.computeBoundingSphere();
    const s = geometry.boundingSphere;
    if (s && s.radius > 0 && Number.isFinite(s.radius)) return s.clone();
    if (bounds) {
      const box = new THREE.Box3(new THREE.Vector3(bounds[0], bounds[1], bounds[2]), new THREE.Vector3(bounds[3], bounds[4], bounds[5]));
      return box.getBoundingSphere(new THREE.Sphere());
    }
    return undefined;
  };

  const view: Viewport = {
    showMesh(mesh, frame) {
      const next = new THREE.BufferGeometry();
      next.setAttribute('position', new THREE.BufferAttribute(mesh.positions, 3));
      next.setAttribute('normal', new THREE.BufferAttribute(mesh.normals, 3));
      if (mesh.colors) next.setAttribute('color', new THREE.BufferAttribute(mesh.colors, 3));
      next.setIndex(new THREE.BufferAttribute(mesh.indices, 1));
      solid.geometry = next;
      wireMesh.geometry = next;
      geometry.dispose();
      geometry = next;
      hasColors = !!mesh.colors;
      applyColors();
      if (frame) view.frame();
      requestRender();
    },

    showProblemEdges(open, nonManifold) {
      for (const child of [...flaws.children]) {
        flaws.remove(child);
        const c = child as THREE.LineSegments | THREE.Points;
        c.geometry.dispose();
        (c.material as THREE.Material).dispose();
      }
      for (const [segments, color] of [
        [open, FLAW_COLORS.open],
        [nonManifold, FLAW_COLORS.nonManifold],
      ] as const) {
        if (segments.length === 0) continue;
        const g = new THREE.BufferGeometry();
        g.setAttribute('position', new THREE.BufferAttribute(segments, 3));
        const lines = new THREE.LineSegments(g, new THREE.LineBasicMaterial({ color, depthTest: false, transparent: true }));
        // Lines are one pixel wide in WebGL: dots on the ends make a hole visible from afar.
        const dots = new THREE.Points(g, new THREE.PointsMaterial({ color, size: 6, sizeAttenuation: false, depthTest: false, transparent: true }));
        lines.renderOrder = dots.renderOrder = 10;
        flaws.add(lines, dots);
      }
      requestRender();
    },

    showBounds(b) {
      bounds = b;
      boundsBox.box.set(new THREE.Vector3(b[0], b[1], b[2]), new THREE.Vector3(b[3], b[4], b[5]));
      boundsBox.visible = boundsOn;
      if (grid) {
        scene.remove(grid);
        grid.geometry.dispose();
        (grid.material as THREE.Material).dispose();
      }
      const size = 2 * Math.max(b[3] - b[0], b[5] - b[2]);
      grid = new THREE.GridHelper(size, 20, 0x45464f, 0x2c2d34);
      grid.position.set((b[0] + b[3]) / 2, b[1], (b[2] + b[5]) / 2);
      scene.add(grid);
      requestRender();
    },

    setColors(on) {
      colorsOn = on;
      applyColors();
      requestRender();
    },
    setWireframe(on) {
      wireMesh.visible = on;
      requestRender();
    },
    setBoundsVisible(on) {
      boundsOn = on;
      boundsBox.visible = on && !!bounds;
      requestRender();
    },
    setFlawsVisible(on) {
      flaws.visible = on;
      requestRender();
    },

    frame() {
      const s = sphereOfView();
      if (!s) return;
      const dir = camera.position.clone().sub(controls.target);
      if (dir.lengthSq() === 0) dir.set(0.6, 0.45, 0.8);
      dir.normalize();
      const fov = THREE.MathUtils.degToRad(camera.fov);
      const fit = Math.min(fov, 2 * Math.atan(Math.tan(fov / 2) * camera.aspect));
      const distance = (s.radius / Math.sin(fit / 2)) * 1.12;
      controls.target.copy(s.center);
      camera.position.copy(s.center).addScaledVector(dir, distance);
      camera.near = distance / 100;
      camera.far = distance * 100;
      camera.updateProjectionMatrix();
      controls.update();
      requestRender();
    },
  };
  return view;
}
