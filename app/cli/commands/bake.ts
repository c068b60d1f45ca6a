/** `fieldkiln bake <field> --out <file.glb> …`: the whole job for one field. */
import { createHash } from 'node:crypto';
import { readFileSync, statSync } from 'node:fs';
import { basename, extname, resolve } from 'node:path';
import { parseArgs } from 'node:util';
import { bakeField, BAKE_DEFAULTS, MESHING_METHODS } from '../../../core/pipeline/bake-field.js';
import { SAMPLE_OCTREE_DEFAULTS } from '../../../core/sampling/sample-octree.js';
import { openField } from '../../fields/open-field.js';
import { checkWritable, writeFileAtomic } from '../../node/atomic-write.js';
import { parseBoundsOption, parseChoice, parseIntegerOption, parseKindOption, parseNumberOption, UsageError } from '../args.js';
import { makeProgress } from '../progress.js';

export const BAKE_HELP = `fieldkiln bake <field> --out <file.glb> [options]

Turns a field (.onnx neural field, .npy grid with .json sidecar, .json recipe) into a closed mesh in a GLB file.

  --out <file.glb>        where to write the mesh (required)
  --level <v>             iso-level in the field's units (default: the field's own; 0 for sdf/occupancy)
  --depth <d>             finest octree level: 2^d cells along the longest side (default ${BAKE_DEFAULTS.depth}, ${SAMPLE_OCTREE_DEFAULTS.minDepth}..${SAMPLE_OCTREE_DEFAULTS.maxDepth})
  --bounds <x0,y0,z0,x1,y1,z1>   region to mesh, metres (default: the field's bounds)
  --kind <sdf|density|occupancy> what the field's value means, for a model without metadata
  --lipschitz <L>         gradient bound used to skip empty space in a neural SDF (default ${SAMPLE_OCTREE_DEFAULTS.neuralLipschitz})
  --start-depth <n>       first level refined for density/occupancy fields (default ${SAMPLE_OCTREE_DEFAULTS.startDepth})
  --method <name>         ${MESHING_METHODS.join(' | ')} (default ${BAKE_DEFAULTS.method})
  --nonfinite <mode>      error | outside: what NaN/±Inf samples mean (default error)
  --report <file.json>    also write the report as JSON
  --overwrite             replace existing output files
  --quiet                 no progress on stderr
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
      report: { type: 'string' },
      overwrite: { type: 'boolean', default: false },
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
  if (extname(values.out).toLowerCase() !== '.glb') throw new UsageError(`--out must end in .glb (got '${values.out}')`);
  const depth = parseIntegerOption('depth', values.depth, SAMPLE_OCTREE_DEFAULTS.minDepth, SAMPLE_OCTREE_DEFAULTS.maxDepth);
  const level = parseNumberOption('level', values.level);
  const bounds = parseBoundsOption(values.bounds);
  const kind = parseKindOption(values.kind);
  const lipschitz = parseNumberOption('lipschitz', values.lipschitz);
  if (lipschitz !== undefined && !(lipschitz > 0)) throw new UsageError(`--lipschitz wants a positive number (got '${values.lipschitz}')`);
  const startDepth = parseIntegerOption('start-depth', values['start-depth'], 0, SAMPLE_OCTREE_DEFAULTS.maxDepth);
  const method = parseChoice('method', values.method, MESHING_METHODS);
  const nonfinite = parseChoice('nonfinite', values.nonfinite, ['error', 'outside'] as const);
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
    const bytes = readFileSync(input);
    const sha256 = createHash('sha256').update(bytes).digest('hex');
    const result = await bakeField(field, {
      depth,
      level,
      bounds,
      lipschitz,
      startDepth,
      nonfinite,
      method,
      provenance: { file: basename(input), sha256, bytes: statSync(input).size },
      onProgress: progress.update,
      logger: { warn: () => {} },
    });
    progress.done();
    writeFileAtomic(outPath, result.glb!);
    const report = result.report;
    report.timings = { open: openSecs, ...report.timings, total: Math.round(performance.now() - t0) / 1000 };
    report.output = { path: outPath, bytes: result.glb!.length, format: 'glb' };
    if (reportPath) writeFileAtomic(reportPath, JSON.stringify(report, null, 2) + '\n');
    for (const w of report.warnings) process.stderr.write(`fieldkiln: warning: ${w}\n`);
    const m = report.mesh;
    process.stdout.write(
      `${outPath}: ${m.triangles} triangles, ${m.vertices} vertices, ${m.watertight ? 'watertight' : 'NOT watertight'}, ` +
        `${m.components} component(s), genus ${m.genus ?? 'n/a'}, area ${m.area.toFixed(4)} m², volume ${m.volume.toFixed(5)} m³, ` +
        `${report.output.bytes} bytes, ${report.timings.total} s\n`,
    );
    return 0;
  } finally {
    progress.done();
    await field.dispose?.();
  }
}
