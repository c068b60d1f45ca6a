/** `fieldkiln bake <field> --out <file.glb|.gltf|.ply|.stl|.obj> …`: the whole job for one field. */
import { createHash } from 'node:crypto';
import { availableParallelism, freemem } from 'node:os';
import { readFileSync, statSync } from 'node:fs';
import { basename, extname, resolve } from 'node:path';
import { parseArgs } from 'node:util';
import { deflateSync } from 'node:zlib';
import { bakeField, BAKE_DEFAULTS, MESHING_METHODS, NORMALS_METHODS } from '../../../core/pipeline/bake-field.js';
import { EXPORT_FORMATS, formatFromExtension } from '../../../core/export/export-mesh.js';
import { SMALL_PART_WARNING_FRACTION } from '../../../core/cleanup/remove-small-parts.js';
import { SAMPLE_OCTREE_DEFAULTS } from '../../../core/sampling/sample-octree.js';
import { TEXTURE_DEFAULTS } from '../../../core/texture/bake-textures.js';
import { openField } from '../../fields/open-field.js';
import { estimateCost, deepestFitting } from '../../../core/sampling/estimate-cost.js';
import { probeField } from '../../../core/sampling/probe-field.js';
import type { Field } from '../../../core/fields/field.js';
import { FieldkilnError, type Bounds } from '../../../core/types.js';
import { checkWritable, writeFileAtomic } from '../../node/atomic-write.js';
import { loadUnwrapper } from '../../node/load-unwrapper.js';
import { checkMeshOffThread } from '../../node/check-mesh-off-thread.js';
import { closeMarchingCubesGridPool, marchingCubesGridParallel } from '../../node/marching-cubes-grid-parallel.js';

/**
 * `--on-samples` grids of at least this many samples (about 161³) are meshed on every core: below it,
 * starting the workers (90–270 ms measured on the 2-core machine) costs more than the threads save.
 */
const PARALLEL_GRID_MIN_SAMPLES = 1 << 22;
import { parseBoundsOption, parseChoice, parseIntegerOption, parseKindOption, parseNumberOption, UsageError } from '../args.js';
import { makeProgress } from '../progress.js';

export const BAKE_HELP = `fieldkiln bake <field> --out <file.glb> [options]

Turns a field (.onnx neural field, .npy grid with .json sidecar, .json recipe) into a closed mesh in a GLB file
(or glTF, PLY, STL, OBJ).

  --out <file>            where to write the mesh (required); .glb, .gltf, .ply, .stl or .obj picks the format
  --format <name>         ${EXPORT_FORMATS.join(' | ')}: the output format when --out's extension does not say (default ${BAKE_DEFAULTS.format})
  --level <v>             iso-level in the field's units (default: the field's own; 0 for sdf/occupancy)
  --depth <d>             finest octree level: 2^d cells along the longest side (default ${BAKE_DEFAULTS.depth}, ${SAMPLE_OCTREE_DEFAULTS.minDepth}..${SAMPLE_OCTREE_DEFAULTS.maxDepth})
  --bounds <x0,y0,z0,x1,y1,z1>   region to mesh, metres (default: the field's bounds)
  --kind <sdf|density|occupancy> what the field's value means, for a model without metadata
  --lipschitz <L>         gradient bound used to skip empty space in a neural SDF (default ${SAMPLE_OCTREE_DEFAULTS.neuralLipschitz})
  --start-depth <n>       first level refined for density/occupancy fields (default ${SAMPLE_OCTREE_DEFAULTS.startDepth})
  --method <name>         ${MESHING_METHODS.join(' | ')} (default ${BAKE_DEFAULTS.method})
  --on-samples            .npy grids: mesh the grid at its own samples (marching cubes straight over them, skipping
                          empty blocks) instead of resampling it on the octree lattice; --depth, --bounds,
                          --lipschitz and --start-depth do not apply
  --nonfinite <mode>      error | outside: what NaN/±Inf samples mean (default error)
  --min-part <fraction>   drop parts whose area is below this fraction of the largest part's (default: keep all,
                          and warn about parts under ${SMALL_PART_WARNING_FRACTION})
  --budget <triangles>    decimate to at most this many triangles, keeping the mesh closed and manifold (default: none)
  --lods <n>              n further levels of detail, each about half the triangles of the one before (default ${BAKE_DEFAULTS.lods});
                          written to glTF/GLB only, as nodes <name>_LOD1.. in scenes of their own
  --normals <field|mesh>  vertex normals from the field's gradient or area-weighted from the mesh (default ${BAKE_DEFAULTS.normals})
  --quantize              glTF/GLB: store attributes as integers (KHR_mesh_quantization; smaller files)
  --meshopt               glTF/GLB: compress with EXT_meshopt_compression (implies --quantize; smallest files)
  --texture <size>        glTF/GLB: bake a base-color texture and a tangent-space normal map of size × size texels
                          (a power of two, ${TEXTURE_DEFAULTS.minSize}..${TEXTURE_DEFAULTS.maxSize}) from the field onto the base level, with a UV
                          layout (TEXCOORD_0) and tangents (TANGENT); needs a mesh of at most ${TEXTURE_DEFAULTS.maxTriangles} triangles
                          (use --budget); LODs keep vertex colors
  --collision             glTF/GLB: add the convex hull of the base level as node <name>_collision, alone in
                          scene 'collision' (not drawn with the default scene)
  --report <file.json>    also write the report as JSON
  --overwrite             replace existing output files
  --force                 run even when the memory estimate exceeds the free memory
  --quiet                 no progress on stderr

Vertex colors are linear RGB (glTF COLOR_0); PLY and OBJ get them sRGB-encoded, as their readers expect.
`;

export async function runBake(argv: string[]): Promise<number> {
  const { values, positionals } = parseArgs({
    args: argv,
    allowPositionals: true,
    strict: true,
    options: {
      out: { type: 'string', short: 'o' },
      level: { type: 'string' },
      depth: { type: 'string' },
      bounds: { type: 'string' },
      kind: { type: 'string' },
      lipschitz: { type: 'string' },
      'start-depth': { type: 'string' },
      method: { type: 'string' },
      nonfinite: { type: 'string' },
      'min-part': { type: 'string' },
      budget: { type: 'string' },
      lods: { type: 'string' },
      normals: { type: 'string' },
      format: { type: 'string' },
      quantize: { type: 'boolean', default: false },
      meshopt: { type: 'boolean', default: false },
      texture: { type: 'string' },
      collision: { type: 'boolean', default: false },
      report: { type: 'string' },
      overwrite: { type: 'boolean', default: false },
      force: { type: 'boolean', default: false },
      'on-samples': { type: 'boolean', default: false },
      quiet: { type: 'boolean', default: false },
      help: { type: 'boolean', short: 'h' },
    },
  });
  if (values.help) {
    process.stdout.write(BAKE_HELP);
    return 0;
  }
  if (positionals.length !== 1) throw new UsageError(`bake wants exactly one field file (got ${positionals.length}); see 'fieldkiln bake --help'`);
  const input = positionals[0];
  if (!values.out) throw new UsageError(`bake needs --out <file.glb>`);
  const format = outputFormat(values.out, values.format);
  const depth = parseIntegerOption('depth', values.depth, SAMPLE_OCTREE_DEFAULTS.minDepth, SAMPLE_OCTREE_DEFAULTS.maxDepth);
  const level = parseNumberOption('level', values.level);
  const bounds = parseBoundsOption(values.bounds);
  const kind = parseKindOption(values.kind);
  const lipschitz = parseNumberOption('lipschitz', values.lipschitz);
  if (lipschitz !== undefined && !(lipschitz > 0)) throw new UsageError(`--lipschitz wants a positive number (got '${values.lipschitz}')`);
  const startDepth = parseIntegerOption('start-depth', values['start-depth'], 0, SAMPLE_OCTREE_DEFAULTS.maxDepth);
  const method = parseChoice('method', values.method, MESHING_METHODS);
  const nonfinite = parseChoice('nonfinite', values.nonfinite, ['error', 'outside'] as const);
  const minPart = parseNumberOption('min-part', values['min-part']);
  if (minPart !== undefined && !(minPart >= 0 && minPart <= 1)) throw new UsageError(`--min-part wants a fraction from 0 to 1 (got '${values['min-part']}')`);
  const budget = parseIntegerOption('budget', values.budget, 4, 2 ** 31);
  const lods = parseIntegerOption('lods', values.lods, 0, 16);
  const normals = parseChoice('normals', values.normals, NORMALS_METHODS);
  const texture = parseIntegerOption('texture', values.texture, TEXTURE_DEFAULTS.minSize, TEXTURE_DEFAULTS.maxSize);
  if (texture !== undefined && (texture & (texture - 1)) !== 0) throw new UsageError(`--texture wants a power of two such as 512, 1024 or 2048 (got '${values.texture}')`);
  const onSamples = values['on-samples'] ?? false;
  if (onSamples) {
    const given = (['depth', 'bounds', 'lipschitz', 'start-depth'] as const).filter((o) => values[o] !== undefined);
    if (given.length > 0) throw new UsageError(`--${given[0]} does not apply with --on-samples: the grid is meshed at its own samples, over its own bounds`);
  }
  const overwrite = values.overwrite ?? false;
  const outPath = resolve(values.out);
  const reportPath = values.report ? resolve(values.report) : undefined;
  if (reportPath && reportPath === outPath) throw new UsageError('--report and --out name the same file');
  // Refuse early, before any work, when the outputs cannot be written.
  checkWritable(outPath, overwrite, 'output');
  if (reportPath) checkWritable(reportPath, overwrite, 'report');

  const t0 = performance.now();
  const progress = makeProgress(process.stderr, values.quiet);
  progress.update('open', 0);
  const field = await openField(input, { kind, bounds, level });
  const openSecs = Math.round(performance.now() - t0) / 1000;
  try {
    const early = onSamples ? [] : await guardResources(field, { depth: depth ?? BAKE_DEFAULTS.depth, level, bounds, lipschitz, startDepth, force: values.force ?? false });
    const bytes = readFileSync(input);
    const sha256 = createHash('sha256').update(bytes).digest('hex');
    const result = await bakeField(field, {
      texture,
      unwrapper: texture ? await loadUnwrapper() : undefined,
      deflate: (b) => deflateSync(b),
      collision: values.collision,
      depth,
      level,
      bounds,
      lipschitz,
      startDepth,
      nonfinite,
      method,
      onSamples,
      meshChecker: checkMeshOffThread,
      gridExtractor: onSamples && field.samples && field.samples.values.length >= PARALLEL_GRID_MIN_SAMPLES && availableParallelism() > 1 ? marchingCubesGridParallel : undefined,
      minPart,
      budget,
      lods,
      normals,
      format,
      quantize: values.quantize,
      meshopt: values.meshopt,
      provenance: { file: basename(input), sha256, bytes: statSync(input).size },
      onProgress: progress.update,
      logger: { warn: () => {} },
    });
    progress.done();
    writeFileAtomic(outPath, result.bytes!);
    const report = result.report;
    report.warnings.unshift(...early);
    report.timings = { open: openSecs, ...report.timings, total: Math.round(performance.now() - t0) / 1000 };
    report.output = { path: outPath, bytes: result.bytes!.length, format };
    if (reportPath) writeFileAtomic(reportPath, JSON.stringify(report, null, 2) + '\n');
    for (const w of report.warnings) process.stderr.write(`fieldkiln: warning: ${w}\n`);
    const m = report.mesh;
    process.stdout.write(
      `${outPath}: ${m.triangles} triangles, ${m.vertices} vertices, ${m.watertight ? 'watertight' : 'NOT watertight'}, ` +
        `${m.components} component(s), genus ${m.genus ?? 'n/a'}, area ${m.area.toFixed(4)} m², volume ${m.volume.toFixed(5)} m³, ` +
        `${report.output.bytes} bytes, ${report.timings.total} s\n`,
    );
    if (report.decimation.targetTriangles !== null || report.lods.length > 0) {
      const levels = [`base ${report.decimation.triangles} (max error ${mm(report.decimation.maxError)})`, ...report.lods.map((l) => `LOD${l.level} ${l.triangles} (${mm(l.maxError)})`)];
      process.stdout.write(`  triangles: ${levels.join(', ')}\n`);
    }
    if (report.texture) {
      const x = report.texture;
      process.stdout.write(
        `  texture: ${x.size}×${x.size}, ${x.charts} charts, ${(100 * x.coverage).toFixed(1)}% of texels covered, stretch ${x.stretch}, ${x.bakeSeconds} s\n`,
      );
    }
    if (report.collision) process.stdout.write(`  collision: ${report.collision.node}, ${report.collision.triangles} triangles, ${report.collision.vertices} vertices\n`);
    return 0;
  } finally {
    progress.done();
    await field.dispose?.();
    await closeMarchingCubesGridPool();
  }
}

/**
 * Before the real run: warns when the level lies outside the values a coarse probe sees, and refuses
 * (unless `force`) when the estimated memory exceeds 80% of the free memory, naming the estimate and
 * the deepest level that fits. `FIELDKILN_FREE_MEMORY` (bytes) stands in for the free memory in tests.
 */
async function guardResources(
  field: Field,
  o: { depth: number; level?: number; bounds?: Bounds; lipschitz?: number; startDepth?: number; force: boolean },
): Promise<string[]> {
  const warnings: string[] = [];
  const lev = o.level ?? field.defaultLevel;
  if (lev !== undefined) {
    const probe = await probeField(field, { level: lev, bounds: o.bounds });
    const [lo, hi] = probe.valueRange;
    if (Number.isFinite(lo) && (lev <= lo || lev >= hi)) {
      warnings.push(`level ${lev} lies outside the values the field takes on a coarse probe (${sig(lo)} to ${sig(hi)}); the surface may be empty or tiny`);
    }
  }
  if (o.force || o.depth <= 6) return warnings;
  const est = await estimateCost(field, { depth: o.depth, level: lev, bounds: o.bounds, lipschitz: o.lipschitz, startDepth: o.startDepth });
  const free = Number(process.env.FIELDKILN_FREE_MEMORY) || freemem();
  const budget = 0.8 * free;
  if (est.bytes > budget) {
    const fit = deepestFitting(est, budget);
    throw new FieldkilnError(
      `depth ${o.depth} would need about ${gib(est.bytes)} of memory (about ${sig(est.evaluations)} field evaluations and ${sig(est.triangles)} triangles before any budget), ` +
        `more than the ${gib(free)} free; ${fit ? `try --depth ${fit}` : 'no depth fits'}, or pass --force to run anyway`,
    );
  }
  return warnings;
}

const gib = (b: number) => `${(b / 2 ** 30).toFixed(b < 2 ** 30 ? 2 : 1)} GiB`;
const sig = (v: number) => Number(v.toPrecision(3)).toString();

/** The output format: --out's extension, or --format; they must agree when both are given. */
function outputFormat(out: string, flag: string | undefined) {
  const fromFlag = parseChoice('format', flag, EXPORT_FORMATS);
  const ext = extname(out);
  const fromExt = formatFromExtension(ext);
  if (fromFlag && fromExt && fromFlag !== fromExt) throw new UsageError(`--format ${fromFlag} disagrees with --out's extension '${ext}'`);
  const format = fromFlag ?? fromExt;
  if (!format) throw new UsageError(`--out must end in ${EXPORT_FORMATS.map((f) => '.' + f).join(', ')}, or give --format (got '${out}')`);
  return format;
}

function mm(metres: number): string {
  return `${(metres * 1000).toFixed(2)} mm`;
}
