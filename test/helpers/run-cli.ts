/** Runs the built CLI in a child process (the way a user runs it). Requires `npm run build` (the test script does it). */
import { spawnSync } from 'node:child_process';
import { resolve } from 'node:path';
import { REPO_ROOT } from './fixtures.js';

export const CLI = resolve(REPO_ROOT, 'app', 'cli', 'fieldkiln.mjs');

export function runCli(args: string[], opts: { cwd?: string; timeoutMs?: number } = {}): { code: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [CLI, ...args], { cwd: opts.cwd ?? REPO_ROOT, encoding: 'utf8', timeout: opts.timeoutMs ?? 300_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}
