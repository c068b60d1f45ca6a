/**
 * The paths the user chose in this session: through the open or save dialog, by dropping a file on
 * the window, on the command line, plus the bundled demo. The request handlers read and write only
 * paths in this set; a path the window sends that the user never chose is refused.
 */
import path from 'node:path';

/** What a path was granted for. */
export type GrantMode = 'read' | 'write';

/** A set of user-chosen absolute paths, each for reading or writing. */
export class PathGrants {
  private readonly grants = new Map<string, Set<GrantMode>>();

  /** Records that the user chose `filePath` for `mode`. The path is normalized first. */
  grant(filePath: string, mode: GrantMode): string {
    const key = normalize(filePath);
    let modes = this.grants.get(key);
    if (!modes) {
      modes = new Set();
      this.grants.set(key, modes);
    }
    modes.add(mode);
    return key;
  }

  /** True when the user chose `filePath` for `mode`. */
  allows(filePath: string, mode: GrantMode): boolean {
    if (typeof filePath !== 'string' || !path.isAbsolute(filePath)) return false;
    return this.grants.get(normalize(filePath))?.has(mode) ?? false;
  }

  /** The granted paths for `mode`, oldest first. */
  list(mode: GrantMode): string[] {
    return [...this.grants].filter(([, m]) => m.has(mode)).map(([p]) => p);
  }
}

function normalize(filePath: string): string {
  if (!path.isAbsolute(filePath)) throw new Error(`PathGrants: path must be absolute (got '${filePath}')`);
  return path.normalize(filePath);
}
