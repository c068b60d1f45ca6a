/**
 * Makes sure build/ holds an up-to-date compile of app/ and core/ before the app tests use it: the
 * bake worker runs as compiled JS (Node 20 cannot start a TypeScript worker), and the browser tests
 * load the compiled renderer. `npm test` builds first; when a test file runs alone and finds a
 * source newer than its output, it runs tsc itself, under a lock so two test files never build at once.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, rmdirSync, statSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
export const buildRoot = path.join(repoRoot, 'build');
/** The compiled bake worker handlers.ts starts. */
export const builtWorker = path.join(buildRoot, 'app', 'main', 'bake-worker.js');

/** Sources whose output is missing or older than the source. */
function staleSources(): string[] {
  const stale: string[] = [];
  const walk = (dir: string) => {
    for (const entry of readdirSync(dir, { withFileTypes: true })) {
      const full = path.join(dir, entry.name);
      if (entry.isDirectory()) walk(full);
      else if (/\.c?ts$/.test(entry.name) && !entry.name.endsWith('.d.ts')) {
        const rel = path.relative(repoRoot, full).replace(/\.ts$/, '.js').replace(/\.cts$/, '.cjs');
        const out = path.join(buildRoot, rel);
        if (!existsSync(out) || statSync(out).mtimeMs < statSync(full).mtimeMs) stale.push(rel);
      }
    }
  };
  walk(path.join(repoRoot, 'app'));
  walk(path.join(repoRoot, 'core'));
  return stale;
}

/** Rebuilds build/ with tsconfig.build.json when any app/ or core/ output is stale. */
export async function ensureAppBuild(): Promise<void> {
  if (staleSources().length === 0) return;
  const lock = path.join(repoRoot, '.fieldkiln-tmp-app-build-lock');
  const deadline = Date.now() + 110_000;
  for (;;) {
    try {
      mkdirSync(lock);
      break;
    } catch {
      if (Date.now() > deadline) throw new Error(`ensureAppBuild: ${lock} stayed locked for 110 s; remove it if no build is running`);
      await new Promise((r) => setTimeout(r, 250));
    }
  }
  try {
    if (staleSources().length === 0) return; // another test file built it meanwhile
    try {
      execFileSync(process.execPath, [path.join(repoRoot, 'node_modules', 'typescript', 'bin', 'tsc'), '-p', 'tsconfig.build.json'], { cwd: repoRoot, stdio: 'pipe' });
    } catch {
      // tsc still writes its output when other files have type errors (work in progress elsewhere);
      // what matters here is that our outputs are fresh, checked below.
    }
    // Others may save core files while tsc runs; the app's own outputs must be fresh.
    const still = staleSources().filter((s) => s.startsWith(`app${path.sep}`));
    if (!existsSync(builtWorker)) throw new Error(`ensureAppBuild: tsc did not write ${builtWorker}`);
    if (still.length > 0) throw new Error(`ensureAppBuild: still stale after tsc: ${still.slice(0, 5).join(', ')}`);
  } finally {
    rmdirSync(lock);
  }
}
