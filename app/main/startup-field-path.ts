/**
 * The field named on the command line: `npm start -- path/to/field` runs
 * `electron build/app/main/main.js path/to/field`, and a packaged app runs `fieldkiln path/to/field`.
 *
 * No electron import (tests call it with made-up argument lists).
 */
import path from 'node:path';

/**
 * Picks the field path from Electron's `process.argv`: the first argument after the app's own that
 * does not start with `-` (Electron and Chromium switches do). A relative path is resolved against
 * `cwd` (main.ts passes npm's INIT_CWD, the folder `npm start` was typed in, else the process's).
 *
 * @param argv - `process.argv`: [electron, main.js, …args] unpacked; [app, …args] packaged.
 * @param isPackaged - `app.isPackaged`.
 * @param cwd - Folder relative paths are resolved against.
 * @returns An absolute path, or undefined when none was given.
 * @example
 * startupFieldPath(['/usr/bin/electron', 'build/app/main/main.js', 'fields/ball.onnx'], false, '/home/ana') // → '/home/ana/fields/ball.onnx'
 */
export function startupFieldPath(argv: readonly string[], isPackaged: boolean, cwd: string): string | undefined {
  const args = argv.slice(isPackaged ? 1 : 2);
  let afterDashes = false;
  for (const a of args) {
    if (!afterDashes && a === '--') {
      afterDashes = true;
      continue;
    }
    if (!afterDashes && a.startsWith('-')) continue;
    if (a === '' || a === '.') continue;
    return path.resolve(cwd, a);
  }
  return undefined;
}
