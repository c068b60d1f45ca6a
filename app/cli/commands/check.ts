/** `fieldkiln check <mesh.glb|.gltf|.ply|.stl|.obj> [--json]`: runs the topology checks on any mesh file. */
import { existsSync, readFileSync, statSync } from 'node:fs';
import { dirname, extname, resolve } from 'node:path';
import { parseArgs } from 'node:util';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import type { CheckResult } from '../../../core/checks/check-result.js';
import { runChecks, allChecksPass } from '../../../core/checks/run-checks.js';
import { readMeshFile, MESH_FILE_FORMATS, type MeshFileFormat } from '../../../core/import/read-mesh-file.js';
import { FieldkilnError } from '../../../core/types.js';
import { UsageError } from '../args.js';

/** Exit status when the file was read but a check failed (0: all pass; 1: unreadable; 2: usage). */
export const CHECK_FAILED_EXIT = 3;

/** Help text of `fieldkiln check`. */
export const CHECK_HELP = `fieldkiln check <mesh.glb|.gltf|.ply|.stl|.obj> [--json]

Runs Fieldkiln's topology checks on every mesh in the file (each node of a glTF file, in world space):
finite, closed (no boundary edges), edge-manifold, vertex-manifold, consistently wound, no degenerate
triangles, outward oriented; then components, Euler characteristic and genus per component, area and
signed volume. Each failing check says where (a few points, metres).

  --json     print the results as JSON

Exit status: 0 when every check passes on every mesh, ${CHECK_FAILED_EXIT} when one fails, 1 when the file
cannot be read, 2 for usage errors.
`;

/** What `check --json` prints for one mesh. */
export interface CheckedMesh {
  name: string;
  vertices: number;
  triangles: number;
  pass: boolean;
  checks: CheckResult[];
  components: number | null;
  eulerCharacteristic: number | null;
  genus: number | null;
  perComponent: { triangles: number; area: number; volume: number; eulerCharacteristic: number; genus: number | null }[];
  area: number | null;
  volume: number | null;
}

/** Runs `fieldkiln check` on `argv` (the arguments after `check`); resolves to the exit status. */
export async function runCheck(argv: string[]): Promise<number> {
  const { values, positionals } = parseArgs({
    args: argv,
    allowPositionals: true,
    strict: true,
    options: { json: { type: 'boolean', default: false }, help: { type: 'boolean', short: 'h' } },
  });
  if (values.help) {
    process.stdout.write(CHECK_HELP);
    return 0;
  }
  if (positionals.length !== 1) throw new UsageError(`check wants exactly one mesh file (got ${positionals.length}); see 'fieldkiln check --help'`);
  const file = resolve(positionals[0]);
  const ext = extname(file).toLowerCase().replace(/^\./, '');
  if (!(MESH_FILE_FORMATS as readonly string[]).includes(ext)) {
    throw new UsageError(`check reads ${MESH_FILE_FORMATS.map((f) => '.' + f).join(', ')} files (got '${positionals[0]}')`);
  }
  if (!existsSync(file)) throw new FieldkilnError(`file does not exist: ${file}`);
  if (statSync(file).isDirectory()) throw new FieldkilnError(`${file} is a folder, not a mesh file`);
  const bytes = new Uint8Array(readFileSync(file));
  const format = ext as MeshFileFormat;
  const parts = await readMeshFile(format, bytes, format === 'gltf' ? { resources: externalBuffers(file, bytes) } : {});
  if (parts.length === 0 || parts.every((p) => p.mesh.indices.length === 0)) throw new FieldkilnError(`${positionals[0]}: no triangles found`);

  const meshes: CheckedMesh[] = parts.map(({ name, mesh }) => {
    const checks = runChecks(mesh);
    const finite = checks[0].ok;
    const a = finite ? analyzeMesh(mesh) : undefined;
    return {
      name,
      vertices: mesh.positions.length / 3,
      triangles: mesh.indices.length / 3,
      pass: allChecksPass(checks),
      checks,
      components: a?.components ?? null,
      eulerCharacteristic: a?.eulerCharacteristic ?? null,
      genus: a?.genus ?? null,
      perComponent: a?.perComponent ?? [],
      area: a?.area ?? null,
      volume: a?.volume ?? null,
    };
  });
  const pass = meshes.every((m) => m.pass);
  if (values.json) {
    process.stdout.write(JSON.stringify({ file, format, pass, meshes }, null, 2) + '\n');
  } else {
    const lines: string[] = [`${file}: ${format.toUpperCase()}, ${meshes.length} mesh(es)`];
    for (const m of meshes) {
      lines.push('', `mesh '${m.name}': ${m.vertices} vertices, ${m.triangles} triangles`);
      for (const c of m.checks) {
        const where = c.where.length ? `, e.g. at ${c.where.map((p) => `(${p.join(', ')})`).join(' ')}` : '';
        lines.push(`  ${c.ok ? 'ok  ' : 'FAIL'}  ${c.name.padEnd(24)} ${c.ok ? c.definition : `${c.count} ${c.unit}${where}`}`);
      }
      if (m.components !== null) {
        const genera = m.perComponent.map((p) => (p.genus === null ? 'open' : String(p.genus)));
        lines.push(
          `  components ${m.components}; Euler characteristic ${m.eulerCharacteristic}; genus ${m.genus ?? 'n/a (open)'}` +
            (m.components > 1 ? ` (per component: ${genera.slice(0, 12).join(', ')}${genera.length > 12 ? ', …' : ''})` : ''),
        );
        lines.push(`  area ${m.area!.toPrecision(6)} m², signed volume ${m.volume!.toPrecision(6)} m³`);
      }
    }
    lines.push('', pass ? 'all checks pass' : `checks failed: ${meshes.filter((m) => !m.pass).map((m) => `'${m.name}' (${m.checks.filter((c) => !c.ok).map((c) => c.name).join(', ')})`).join('; ')}`);
    process.stdout.write(lines.join('\n') + '\n');
  }
  return pass ? 0 : CHECK_FAILED_EXIT;
}

/** The external buffers a `.gltf` names, read from beside it. */
function externalBuffers(file: string, bytes: Uint8Array): Record<string, Uint8Array> {
  let json: { buffers?: { uri?: string }[] };
  try {
    json = JSON.parse(new TextDecoder().decode(bytes));
  } catch (e) {
    throw new FieldkilnError(`glTF: ${file} is not valid JSON: ${(e as Error).message}`);
  }
  const out: Record<string, Uint8Array> = {};
  for (const b of json.buffers ?? []) {
    if (!b.uri || /^data:/.test(b.uri)) continue;
    const p = resolve(dirname(file), decodeURIComponent(b.uri));
    if (!existsSync(p)) throw new FieldkilnError(`glTF: buffer '${b.uri}' was not found beside the file (${p})`);
    out[b.uri] = new Uint8Array(readFileSync(p));
  }
  return out;
}
