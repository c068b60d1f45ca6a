/**
 * The desktop app's build and packaging configuration: where tsc puts each entry point, which files
 * a package holds, and the app's identity. main.ts reads the entry points and names from here; a
 * packaging step reads `packageFiles()` (no packager is installed yet, see app/README.md).
 *
 * Electron version: 40.8.5, the newest whose installer runs on Node 20 (41 and later want Node
 * ≥ 22.12 to install; the app itself runs on Electron's own Node either way). See
 * ../shared/DEPENDENCIES.md §7.
 */

/** One platform and CPU a package is built for, in Node's words (`process.platform`, `process.arch`). */
export interface PackageTarget {
  platform: 'linux' | 'darwin' | 'win32';
  arch: 'x64' | 'arm64';
}

/** The shape of {@link ELECTRON_CONFIG}. */
export interface FieldkilnElectronConfig {
  /** Reverse-DNS id (Windows AppUserModelID, macOS bundle id). */
  appId: string;
  productName: string;
  /** Folder tsc writes to (tsconfig.build.json's outDir), relative to the repository root. */
  outDir: string;
  /** Folder packages are written to. */
  packageDir: string;
  /** Built entry points, relative to the repository root. */
  entry: {
    /** The main process (ESM). */
    main: string;
    /** The preload: CommonJS, because a sandboxed preload cannot be an ES module. */
    preload: string;
    /** The bake worker (node:worker_threads). */
    worker: string;
    /** The window's page: static HTML served from the source folder, scripts from outDir. */
    renderer: string;
  };
  /** The bundled demo field, opened when no field is named. */
  demoField: string;
  /** Globs of the files every package holds, relative to the repository root. */
  files: string[];
}

/** Fieldkiln's app configuration (see the file header). */
export const ELECTRON_CONFIG: FieldkilnElectronConfig = {
  appId: 'app.fieldkiln.desktop',
  productName: 'Fieldkiln',
  outDir: 'build',
  packageDir: 'dist',
  entry: {
    main: 'build/app/main/main.js',
    preload: 'build/app/preload/preload.cjs',
    worker: 'build/app/main/bake-worker.js',
    renderer: 'app/renderer/index.html',
  },
  demoField: 'assets/demo/lantern-post.recipe.json',
  files: [
    'package.json',
    'build/core/**/*.js',
    'build/app/**/*.js',
    'build/app/**/*.cjs',
    '!build/app/cli/**',
    'app/renderer/*.html',
    'app/renderer/*.css',
    'assets/demo/**',
    // Only what the window loads from three: the core build and the orbit controls.
    'node_modules/three/package.json',
    'node_modules/three/build/three.module.js',
    'node_modules/three/build/three.core.js',
    'node_modules/three/examples/jsm/controls/OrbitControls.js',
    'node_modules/onnxruntime-node/**',
    'node_modules/onnxruntime-common/**',
    'node_modules/@gltf-transform/core/**',
    'node_modules/@gltf-transform/extensions/**',
    'node_modules/property-graph/**',
    'node_modules/ktx-parse/**',
    'node_modules/meshoptimizer/**',
    'node_modules/gltf-validator/**',
  ],
};

/** The onnxruntime-node native folders, one per platform and CPU (bin/napi-v6/<platform>/<arch>). */
export const ONNX_RUNTIME_BINARIES: readonly PackageTarget[] = [
  { platform: 'linux', arch: 'x64' },
  { platform: 'linux', arch: 'arm64' },
  { platform: 'darwin', arch: 'arm64' },
  { platform: 'win32', arch: 'x64' },
  { platform: 'win32', arch: 'arm64' },
];

/**
 * Globs that leave out onnxruntime-node's native binaries for every other platform and CPU: the
 * package ships 288 MB of them, of which one target needs 25–86 MB (DEPENDENCIES.md §1).
 */
export function onnxRuntimeExcludes(target: PackageTarget): string[] {
  return ONNX_RUNTIME_BINARIES.filter((b) => b.platform !== target.platform || b.arch !== target.arch).map(
    (b) => `!node_modules/onnxruntime-node/bin/napi-v6/${b.platform}/${b.arch}/**`,
  );
}

/** Every glob a package for `target` is built from: the common files, then the exclusions. */
export function packageFiles(target: PackageTarget): string[] {
  return [...ELECTRON_CONFIG.files, ...onnxRuntimeExcludes(target)];
}

export default ELECTRON_CONFIG;
