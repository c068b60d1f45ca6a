/**
 * Writes files so that a reader never sees half of one: the bytes go to a temporary file in the
 * target folder, which is renamed over the target only when complete. Temporary files still open
 * when the process is interrupted (SIGINT, SIGTERM) are removed before it exits.
 */
import { accessSync, closeSync, constants, existsSync, fsyncSync, openSync, readdirSync, renameSync, statSync, unlinkSync, writeSync } from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { FieldkilnError } from '../../core/types.js';

const pending = new Set<string>();
let handlersInstalled = false;

function installHandlers(): void {
  if (handlersInstalled) return;
  handlersInstalled = true;
  const cleanup = () => {
    for (const p of pending) {
      try {
        unlinkSync(p);
      } catch {
        /* already gone */
      }
    }
    pending.clear();
  };
  process.on('exit', cleanup);
  for (const sig of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) {
    process.on(sig, () => {
      cleanup();
      process.exit(sig === 'SIGINT' ? 130 : 143);
    });
  }
}

/** Checks before any work that `path` can be written: its folder exists and is writable, and it does not exist unless `overwrite`. */
export function checkWritable(path: string, overwrite: boolean, what = 'output'): void {
  const abs = resolve(path);
  const dir = dirname(abs);
  if (!existsSync(dir)) throw new FieldkilnError(`${what} folder does not exist: ${dir}`);
  if (!statSync(dir).isDirectory()) throw new FieldkilnError(`${what} folder is not a folder: ${dir}`);
  try {
    accessSync(dir, constants.W_OK);
  } catch {
    throw new FieldkilnError(`${what} folder is not writable: ${dir}`);
  }
  if (existsSync(abs)) {
    if (statSync(abs).isDirectory()) throw new FieldkilnError(`${what} path is a folder: ${abs}`);
    if (!overwrite) throw new FieldkilnError(`${what} file already exists: ${abs} (pass --overwrite to replace it)`);
  }
}

/**
 * Removes temporary files for `abs` left by Fieldkiln processes that no longer run (a SIGKILL during
 * the write itself is the one case a process cannot clean up after).
 */
function removeStaleTemps(abs: string): void {
  const prefix = `.${basename(abs)}.fieldkiln-tmp-`;
  let names: string[];
  try {
    names = readdirSync(dirname(abs));
  } catch {
    return;
  }
  for (const n of names) {
    if (!n.startsWith(prefix)) continue;
    const pid = Number(n.slice(prefix.length).split('-')[0]);
    if (!Number.isInteger(pid) || pid === process.pid) continue;
    let alive = true;
    try {
      process.kill(pid, 0);
    } catch (e) {
      alive = (e as NodeJS.ErrnoException).code === 'EPERM';
    }
    if (!alive) {
      try {
        unlinkSync(join(dirname(abs), n));
      } catch {
        /* gone */
      }
    }
  }
}

/** Writes `bytes` to `path` through a temporary file and a rename. */
export function writeFileAtomic(path: string, bytes: Uint8Array | string): void {
  installHandlers();
  const abs = resolve(path);
  removeStaleTemps(abs);
  const tmp = join(dirname(abs), `.${basename(abs)}.fieldkiln-tmp-${process.pid}-${Math.random().toString(36).slice(2, 8)}`);
  pending.add(tmp);
  try {
    const fd = openSync(tmp, 'w', 0o644);
    try {
      const data = typeof bytes === 'string' ? Buffer.from(bytes, 'utf8') : bytes;
      let off = 0;
      while (off < data.length) off += writeSync(fd, data, off, data.length - off);
      fsyncSync(fd);
    } finally {
      closeSync(fd);
    }
    renameSync(tmp, abs);
  } catch (e) {
    try {
      unlinkSync(tmp);
    } catch {
      /* not created */
    }
    throw e instanceof FieldkilnError ? e : new FieldkilnError(`could not write ${abs}: ${(e as Error).message}`);
  } finally {
    pending.delete(tmp);
  }
}
