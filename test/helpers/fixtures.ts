/** Access to the shared fixtures in ../shared/fixtures (read in place, never copied). */
import { readFileSync, existsSync } from 'node:fs';
import { resolve, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';

export const REPO_ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
export const FIXTURES = resolve(REPO_ROOT, '..', 'shared', 'fixtures');
export const hasFixtures = existsSync(resolve(FIXTURES, 'manifest.json'));

export interface FixtureEntry {
  id: string;
  file: string;
  kind: string;
  bounds: number[];
  level: number;
  truth: { area_m2: number; volume_m3: number; euler_characteristic: number; genus: number; components: number };
  network_surface?: { area_m2: number; volume_m3: number; euler_characteristic: number; components: number };
  grid_marching_cubes_reference?: { area_m2: number; volume_m3: number; euler_characteristic: number };
  fit?: { zero_level_set?: { max_abs: number; mean_abs: number } };
  color?: { spec: Record<string, unknown>; formula?: string };
  [k: string]: unknown;
}

export function loadManifest(): { fixtures: FixtureEntry[] } {
  return JSON.parse(readFileSync(resolve(FIXTURES, 'manifest.json'), 'utf8'));
}

export const fixturePath = (file: string) => resolve(FIXTURES, file);
