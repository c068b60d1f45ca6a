/**
 * Interrupting a bake (Ctrl-C = SIGINT, or SIGTERM) at any moment leaves the previous output untouched
 * and no temporary file behind; the process exits promptly.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, test } from 'vitest';
import { CLI } from '../../helpers/run-cli.js';
import { REPO_ROOT } from '../../helpers/fixtures.js';

const dir = mkdtempSync(join(tmpdir(), 'fieldkiln-int-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function bakeAndSignal(signal: NodeJS.Signals, afterMs: number): Promise<{ code: number | null; sig: NodeJS.Signals | null; stderr: string; ms: number }> {
  const out = join(dir, 'prop.glb');
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [CLI, 'bake', 'assets/demo/lantern-post.recipe.json', '--depth', '10', '--out', out, '--overwrite', '--report', join(dir, 'prop.json')], { cwd: REPO_ROOT });
    let stderr = '';
    child.stderr.on('data', (d) => (stderr += d));
    let sentAt = 0;
    const timer = setTimeout(() => {
      sentAt = Date.now();
      child.kill(signal);
    }, afterMs);
    child.on('exit', (code, sig) => {
      clearTimeout(timer);
      resolve({ code, sig, stderr, ms: sentAt ? Date.now() - sentAt : -1 });
    });
  });
}

describe('interruption', () => {
  for (const [signal, at] of [['SIGINT', 800], ['SIGINT', 3000], ['SIGTERM', 1500], ['SIGINT', 6000]] as const) {
    test(`${signal} after ${at} ms keeps the previous file and leaves no temporary file`, async () => {
      const out = join(dir, 'prop.glb');
      writeFileSync(out, 'the previous export');
      writeFileSync(join(dir, 'prop.json'), '{"previous": true}');
      const r = await bakeAndSignal(signal, at);
      if (r.ms >= 0) {
        // Interrupted: the exit code says so, and it came quickly.
        expect([130, 143, null]).toContain(r.code);
        expect(r.ms).toBeLessThan(5000);
        expect(readFileSync(out, 'utf8')).toBe('the previous export');
      } else {
        // The bake finished before the signal: then the new file is complete.
        expect(r.code).toBe(0);
        expect(readFileSync(out).subarray(0, 4).toString()).toBe('glTF');
      }
      expect(readdirSync(dir).filter((f) => f.includes('fieldkiln-tmp'))).toEqual([]);
    });
  }
});
