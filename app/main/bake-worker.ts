/**
 * The bake worker: opens fields and runs core's bakeField, writeGlb and gltf-validator off the main
 * thread, one job at a time, answering the messages of worker-messages.ts. It holds the open field
 * and the last full-depth result (for export).
 *
 * Started by handlers.ts with `new Worker(<this file, compiled>, { workerData: { cancel } })`.
 */
import { createHash } from 'node:crypto';
import { readFile, stat } from 'node:fs/promises';
import { createRequire } from 'node:module';
import { parentPort, workerData } from 'node:worker_threads';
import { deflateSync } from 'node:zlib';
import type { Field } from '../../core/fields/field.js';
import * as bakeModule from '../../core/pipeline/bake-field.js';
import { bakeField, BAKE_DEFAULTS, MESHING_METHODS, type BakeOptions, type BakeReport } from '../../core/pipeline/bake-field.js';
import type { BakeTexturesResult } from '../../core/texture/bake-textures.js';
import { EXPORT_FORMATS as CORE_EXPORT_FORMATS, exportMesh, isGltfFormat } from '../../core/export/export-mesh.js';
import { probeField } from '../../core/sampling/probe-field.js';
import { SAMPLE_OCTREE_DEFAULTS } from '../../core/sampling/sample-octree.js';
import { collectProblemEdges } from '../../core/checks/collect-problem-edges.js';
import type { WriteGlbOptions } from '../../core/export/write-glb.js';
import { CancelledError, FieldkilnError, type Bounds, type MeshData } from '../../core/types.js';
import { openField } from '../fields/open-field.js';
import { writeFileAtomic } from '../node/atomic-write.js';
import { loadUnwrapper } from '../node/load-unwrapper.js';
import { checkMeshOffThread } from '../node/check-mesh-off-thread.js';
import { BAKE_SETTING_KEYS, EXPORT_FORMATS, type BakeRequest, type BakeResult, type BakeSettings, type ExportRequest, type ExportResult, type MeshPayload, type ValidatorVerdict, type Verdict } from '../shared/ipc.js';
import { chooseLevelRange } from './choose-level-range.js';
import type { FieldFacts, WorkerReply, WorkerRequest, WorkerStartData } from './worker-messages.js';

/** Depth the window starts at, and the range its depth slider offers (core accepts more; deeper is slow). */
export const APP_DEPTHS = { start: BAKE_DEFAULTS.depth, min: 3, max: 10 };
/**
 * A preview samples one level shallower than asked (8× fewer cells), never deeper than
 * {@link PREVIEW_MAX_DEPTH}, and shallower still when previews of this field run slow: each level
 * costs about 4× the time of the one above, so after a preview slower than
 * {@link PREVIEW_TARGET_SECONDS} × 1.5 the next one drops a level, and after one faster than a
 * quarter of it the next one climbs back. On the lantern-post demo, depth-6 previews took
 * 0.28–0.56 s on our busy 2-core machine; on the neural lantern_density.onnx fixture 3.4–4.4 s,
 * so its previews settle two levels lower.
 */
export const PREVIEW_MAX_DEPTH = 6;
/** The shallowest preview. */
export const PREVIEW_MIN_DEPTH = 3;
/** How long a preview should take, seconds (a fraction of a second keeps a moving slider live). */
export const PREVIEW_TARGET_SECONDS = 0.35;

/** Depth a preview samples for a requested depth, given the deepest preview the field allows now. */
export function previewDepth(depth: number, cap = PREVIEW_MAX_DEPTH): number {
  return Math.min(depth, Math.max(PREVIEW_MIN_DEPTH, Math.min(depth - 1, cap)));
}

/** The next preview cap after a preview that took `seconds` at `cap`. */
export function nextPreviewCap(cap: number, seconds: number): number {
  if (seconds > PREVIEW_TARGET_SECONDS * 1.5) return Math.max(PREVIEW_MIN_DEPTH, cap - 1);
  if (seconds < PREVIEW_TARGET_SECONDS / 4) return Math.min(PREVIEW_MAX_DEPTH, cap + 1);
  return cap;
}

/**
 * Shaping options of bakeField (triangle budget, LODs, small-part removal) that this core
 * understands. They are passed only when core declares a default for them in BAKE_DEFAULTS.
 */
export function shapingSupport(): { budget: boolean; lods: boolean; minPart: boolean } {
  const d = BAKE_DEFAULTS as Record<string, unknown>;
  return { budget: 'budget' in d, lods: 'lods' in d, minPart: 'minPart' in d };
}

/** The normal methods bakeField offers (its NORMALS_METHODS), or none when it offers no choice. */
export function normalsMethods(): string[] {
  const m = (bakeModule as Record<string, unknown>).NORMALS_METHODS;
  return Array.isArray(m) && 'normals' in BAKE_DEFAULTS ? m.filter((x): x is string => typeof x === 'string') : [];
}

/** The export formats both core and the IPC contract know. */
export function exportFormats(): (typeof EXPORT_FORMATS)[number][] {
  return EXPORT_FORMATS.filter((f) => (CORE_EXPORT_FORMATS as readonly string[]).includes(f));
}

interface OpenState {
  field: Field;
  path: string;
  name: string;
  sha256: string;
  bytes: number;
}

/** Texture maps and collision hull a bake made (export only, glTF/GLB). */
interface ExportExtras {
  /** Texture edge, texels; 0 = none. */
  texture: number;
  collision: boolean;
}

const NO_EXTRAS: ExportExtras = { texture: 0, collision: false };

interface FullState {
  key: string;
  /** The texture and hull this bake made (`extrasKey` of them). */
  extrasKey: string;
  settings: BakeSettings;
  mesh: MeshData;
  lods: MeshData[];
  report: BakeReport;
  textures?: BakeTexturesResult;
  collision?: MeshData;
}

const port = parentPort;
if (port) {
  const cancel = new Int32Array((workerData as WorkerStartData).cancel);
  let open: OpenState | undefined;
  let full: FullState | undefined;
  let previewCap = PREVIEW_MAX_DEPTH;
  let queue: Promise<void> = Promise.resolve();
  const post = (m: WorkerReply, transfer: ArrayBuffer[] = []) => port.postMessage(m, transfer);

  port.on('message', (msg: WorkerRequest) => {
    queue = queue.then(() => run(msg));
  });

  const run = async (msg: WorkerRequest): Promise<void> => {
    try {
      if (msg.type === 'open') {
        const facts = await doOpen(msg.id, msg.path);
        post({ type: 'done', id: msg.id, ok: true, value: facts });
      } else if (msg.type === 'bake') {
        const { result, transfer } = await doBake(msg.id, msg.request);
        post({ type: 'done', id: msg.id, ok: true, value: result }, transfer);
      } else {
        const value = await doExport(msg.id, msg.path, msg.request);
        post({ type: 'done', id: msg.id, ok: true, value });
      }
    } catch (e) {
      const cancelled = e instanceof CancelledError || isCancelled(msg.id);
      post({ type: 'done', id: msg.id, ok: false, cancelled, error: cancelled ? 'stopped' : plainWords(e) });
    }
  };

  const isCancelled = (id: number) => Atomics.load(cancel, 0) >= id;

  const doOpen = async (id: number, path: string): Promise<FieldFacts> => {
    post({ type: 'progress', id, job: 'open', stage: 'open', fraction: 0 });
    const field = await openField(path);
    try {
      const fileBytes = await readFile(path);
      const sha256 = createHash('sha256').update(fileBytes).digest('hex');
      post({ type: 'progress', id, job: 'open', stage: 'probe', fraction: 0.5 });
      const probe = await probeField(field);
      const choice = chooseLevelRange(field.kind, probe, field.bounds, field.defaultLevel);
      const previous = open;
      open = { field, path, name: field.description.name, sha256, bytes: fileBytes.length };
      full = undefined;
      previewCap = PREVIEW_MAX_DEPTH;
      await previous?.field.dispose?.();
      const orNull = (v: number) => (Number.isFinite(v) ? v : null);
      return {
        name: field.description.name,
        source: field.description.source,
        kind: field.kind,
        bounds: [...field.bounds],
        outputs: [...field.description.outputs],
        hasColor: field.hasColor,
        declaredLevel: field.defaultLevel ?? null,
        startLevel: choice.start,
        levelRange: choice.range,
        valueRange: [orNull(probe.valueRange[0]), orNull(probe.valueRange[1])],
        percentiles: { p1: orNull(probe.percentiles.p1), p50: orNull(probe.percentiles.p50), p99: orNull(probe.percentiles.p99) },
        depth: { start: APP_DEPTHS.start, min: APP_DEPTHS.min, max: APP_DEPTHS.max, preview: previewDepth(APP_DEPTHS.start) },
        methods: [...MESHING_METHODS],
        shaping: shapingSupport(),
        normalsMethods: normalsMethods(),
        exportFormats: exportFormats(),
        details: formatDetails(field.description.details ?? {}),
      };
    } catch (e) {
      if (open?.field !== field) await field.dispose?.();
      throw e;
    }
  };

  /** Runs bakeField for job `id`, polling the shared cancel flag. */
  const runBake = async (id: number, settings: BakeSettings, depth: number, job: 'preview' | 'full' | 'export', extras: ExportExtras = NO_EXTRAS) => {
    if (!open) throw new FieldkilnError('no field is open; open a field first');
    const controller = new AbortController();
    const poll = () => {
      if (isCancelled(id) && !controller.signal.aborted) controller.abort();
    };
    poll();
    const inner = open.field;
    // The same field, asking the flag before every batch of values: the sampler awaits each batch,
    // so a cancel lands within one batch even when evaluation itself is synchronous (recipes).
    const field: Field = {
      kind: inner.kind,
      bounds: inner.bounds,
      defaultLevel: inner.defaultLevel,
      hasColor: inner.hasColor,
      lipschitz: inner.lipschitz,
      costly: inner.costly,
      description: inner.description,
      evaluate: (points, signal) => {
        poll();
        return inner.evaluate(points, signal);
      },
      evaluateColor: inner.evaluateColor
        ? (points, signal) => {
            poll();
            return inner.evaluateColor!(points, signal);
          }
        : undefined,
    };
    const support = shapingSupport();
    const options: BakeOptions & Record<string, unknown> = {
      depth,
      level: settings.level,
      method: settings.method as BakeOptions['method'],
      nonfinite: settings.nonfinite,
      ...(settings.bounds ? { bounds: [...settings.bounds] as Bounds } : {}),
      ...(settings.lipschitz !== null ? { lipschitz: settings.lipschitz } : {}),
      ...(settings.startDepth !== null ? { startDepth: settings.startDepth } : {}),
      skipExport: true,
      signal: controller.signal,
      onProgress: (stage, fraction) => {
        poll();
        post({ type: 'progress', id, job, stage, fraction });
      },
      logger: { warn: () => {} },
    };
    if (support.budget && settings.budget > 0) options.budget = settings.budget;
    if (support.lods && settings.lods > 0) options.lods = settings.lods;
    if (support.minPart && settings.minPart > 0) options.minPart = settings.minPart;
    if (normalsMethods().includes(settings.normals)) options.normals = settings.normals;
    // Texture maps and the hull, as the CLI's bake passes them (app/cli/commands/bake.ts).
    if (extras.texture > 0) {
      options.texture = extras.texture;
      options.unwrapper = await loadUnwrapper();
      options.deflate = (b) => deflateSync(b);
    }
    if (extras.collision) options.collision = true;
    // Full bakes check the base level on a thread of its own while the field is evaluated for normals and
    // colors, as the CLI's bake does; a preview's checks are too short to be worth a thread's start.
    if (job !== 'preview') options.meshChecker = checkMeshOffThread;
    const result = await bakeField(field, options);
    if (isCancelled(id)) throw new CancelledError();
    return result;
  };

  const doBake = async (id: number, request: BakeRequest): Promise<{ result: BakeResult; transfer: ArrayBuffer[] }> => {
    const { quality, ...settings } = request;
    const depth = quality === 'preview' ? previewDepth(settings.depth, previewCap) : settings.depth;
    const t0 = performance.now();
    const result = await runBake(id, settings, depth, quality);
    if (quality === 'preview' && depth === previewCap) previewCap = nextPreviewCap(previewCap, (performance.now() - t0) / 1000);
    const lods = lodsOf(result);
    if (quality === 'full') full = { key: settingsKey(settings), extrasKey: extrasKey(NO_EXTRAS), settings, mesh: result.mesh, lods, report: result.report };
    const problemEdges =
      result.report.mesh.boundaryEdges + result.report.mesh.nonManifoldEdges > 0
        ? collectProblemEdges(result.mesh)
        : { open: new Float32Array(0), nonManifold: new Float32Array(0) };
    // A preview's arrays are handed over (transferred); a full result's are copied, because the
    // worker keeps them for export.
    const bake: BakeResult = {
      jobId: id,
      quality,
      depth,
      level: settings.level,
      mesh: toPayload(result.mesh),
      lods: lods.map(toPayload),
      lodErrorsMm: lodErrorsMm(result.report, lods.length),
      problemEdges,
      verdict: verdictOf(result.report),
    };
    const transfer =
      quality === 'preview'
        ? [bake.mesh, ...bake.lods]
            .flatMap((m) => [m.positions, m.normals, m.indices, m.colors])
            .concat([problemEdges.open, problemEdges.nonManifold])
            .filter((a): a is Float32Array | Uint32Array => a !== undefined && a.byteLength > 0)
            .map((a) => a.buffer as ArrayBuffer)
        : [];
    return { result: bake, transfer: [...new Set(transfer)] };
  };

  const doExport = async (id: number, path: string, request: ExportRequest): Promise<Omit<ExportResult, 'path'>> => {
    if (!open) throw new FieldkilnError('no field is open; open a field first');
    const gltf = isGltfFormat(request.format);
    // Textures go on the full mesh only; both extras are glTF-only (as in core).
    const extras: ExportExtras = {
      texture: gltf && request.lod === 0 ? (request.texture ?? 0) : 0,
      collision: gltf && (request.collision ?? false),
    };
    const wantsExtras = extras.texture > 0 || extras.collision;
    if (!full || full.key !== settingsKey(request.settings) || (wantsExtras && full.extrasKey !== extrasKey(extras))) {
      const result = await runBake(id, request.settings, request.settings.depth, 'export', extras);
      full = {
        key: settingsKey(request.settings),
        extrasKey: extrasKey(extras),
        settings: request.settings,
        mesh: result.mesh,
        lods: lodsOf(result),
        report: result.report,
        textures: result.textures,
        collision: result.collision,
      };
    }
    const textures = extras.texture > 0 ? full.textures : undefined;
    const hull = extras.collision ? full.collision : undefined;
    const chosen = request.lod === 0 ? full.mesh : full.lods[request.lod - 1];
    if (!chosen) throw new FieldkilnError(`there is no level of detail ${request.lod}; this bake has ${full.lods.length} lighter copies`);
    post({ type: 'progress', id, job: 'export', stage: 'export', fraction: 0 });
    const withColors = (m: MeshData): MeshData => ({ positions: m.positions, indices: m.indices, normals: m.normals, colors: request.colors ? m.colors : undefined });
    const s = full.settings;
    const writeOptions: WriteGlbOptions = {
      name: request.name,
      extras: {
        source: { kind: open.field.kind, name: open.name, file: open.name, sha256: open.sha256, bytes: open.bytes },
        options: {
          depth: s.depth,
          level: s.level,
          bounds: s.bounds ?? open.field.bounds,
          method: s.method,
          ...(s.lipschitz !== null ? { lipschitz: s.lipschitz } : {}),
          ...(s.startDepth !== null ? { startDepth: s.startDepth } : {}),
          ...(s.nonfinite !== 'error' ? { nonfinite: s.nonfinite } : {}),
          ...(s.budget > 0 ? { budget: s.budget } : {}),
          ...(s.lods > 0 ? { lods: s.lods } : {}),
          ...(s.minPart > 0 ? { minPart: s.minPart } : {}),
          ...(normalsMethods().length > 0 ? { normals: s.normals } : {}),
          ...(request.lod > 0 ? { lod: request.lod } : {}),
          ...(gltf ? { quantize: request.quantize || request.meshopt, meshopt: request.meshopt } : {}),
          ...(extras.texture > 0 ? { texture: extras.texture } : {}),
          ...(extras.collision ? { collision: true } : {}),
        },
      },
      // glTF keeps the lighter copies as further levels (core names them _LOD<i>); other formats hold one mesh.
      ...(gltf && request.lod === 0 && full.lods.length > 0 ? { lods: full.lods.map(withColors) } : {}),
      ...(gltf ? { quantize: request.quantize || request.meshopt, meshopt: request.meshopt } : {}),
      // The textured mesh is the full mesh split at the UV layout's seams.
      ...(textures ? { textures: { uvs: textures.uvs, tangents: textures.tangents, baseColorPng: textures.baseColorPng, normalPng: textures.normalPng } } : {}),
      ...(hull ? { collision: hull } : {}),
    };
    const fileBytes = await exportMesh(request.format, withColors(textures?.mesh ?? chosen), writeOptions);
    if (isCancelled(id)) throw new CancelledError();
    writeFileAtomic(path, fileBytes);
    const bytes = (await stat(path)).size;
    let validator: ValidatorVerdict | null = null;
    if (gltf) {
      post({ type: 'progress', id, job: 'export', stage: 'validate', fraction: 0.5 });
      validator = await validateGltf(fileBytes).catch((e: unknown) => {
        // gltf-validator is a devDependency today; a package built without it still exports.
        if ((e as NodeJS.ErrnoException)?.code === 'MODULE_NOT_FOUND') return null;
        throw e;
      });
    }
    return {
      bytes,
      format: request.format,
      validator,
      texture: textures ? { size: textures.report.size, coverage: textures.report.coverage } : null,
      collision: hull ? { triangles: hull.indices.length / 3 } : null,
    };
  };
}

/** The key of a bake's export extras. */
function extrasKey(e: ExportExtras): string {
  return `${e.texture}/${e.collision}`;
}

/** The key of a bake's settings: two settings give the same mesh when their keys are equal. */
function settingsKey(s: BakeSettings): string {
  return JSON.stringify(BAKE_SETTING_KEYS.map((k) => s[k]));
}

function toPayload(m: MeshData): MeshPayload {
  return { positions: m.positions, normals: m.normals ?? new Float32Array(m.positions.length), indices: m.indices, ...(m.colors ? { colors: m.colors } : {}) };
}

/** The lighter copies a bake made, when core makes them (`lods`: meshes, or objects holding one). */
function lodsOf(result: unknown): MeshData[] {
  const lods = (result as { lods?: unknown }).lods;
  if (!Array.isArray(lods)) return [];
  return lods
    .map((l) => (l && typeof l === 'object' && 'mesh' in l ? (l as { mesh: MeshData }).mesh : (l as MeshData)))
    .filter((m): m is MeshData => !!m && m.positions instanceof Float32Array && m.indices instanceof Uint32Array);
}

/** The Check step's figures from a bake report. */
export function verdictOf(report: BakeReport): Verdict {
  const m = report.mesh;
  const timings = Object.entries(report.timings).filter(([k, v]) => k !== 'total' && typeof v === 'number') as [string, number][];
  if (typeof report.timings.total === 'number') timings.push(['total', report.timings.total]);
  return {
    triangles: m.triangles,
    vertices: m.vertices,
    watertight: m.watertight,
    boundaryEdges: m.boundaryEdges,
    nonManifoldEdges: m.nonManifoldEdges,
    components: m.components,
    genus: m.genus,
    area: m.area,
    volume: m.volume,
    errorMm: errorMmOf(report),
    timings,
    warnings: [...report.warnings],
  };
}

/**
 * The shaping error in millimetres: the report's `decimation.maxError` (metres, measured from the
 * unreduced mesh) when a budget was set; null without one, or when core reports none.
 */
function errorMmOf(report: BakeReport): number | null {
  const d = (report as unknown as { decimation?: { targetTriangles?: number | null; maxError?: number } }).decimation;
  if (!d || d.targetTriangles === null || d.targetTriangles === undefined || typeof d.maxError !== 'number') return null;
  return d.maxError * 1000;
}

/** Each lighter copy's error in millimetres (the report's `lods[i].maxError`, metres). */
function lodErrorsMm(report: BakeReport, count: number): number[] {
  const lods = (report as unknown as { lods?: { maxError?: number }[] }).lods;
  return Array.from({ length: count }, (_, i) => (Array.isArray(lods) && typeof lods[i]?.maxError === 'number' ? lods[i].maxError! * 1000 : NaN));
}

function formatDetails(details: Record<string, unknown>): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [k, v] of Object.entries(details)) {
    if (v === undefined || v === null) continue;
    const text = typeof v === 'object' ? JSON.stringify(v) : String(v);
    out[k] = text.length > 120 ? `${text.slice(0, 117)}…` : text;
  }
  return out;
}

interface GltfValidatorReport {
  validatorVersion: string;
  issues: { numErrors: number; numWarnings: number; numInfos: number; messages: { code: string; message: string; severity: number }[] };
}

/**
 * Runs gltf-validator on GLB or self-contained glTF JSON bytes (it has no types; loaded through
 * require). It does not check data inside EXT_meshopt_compression (DEPENDENCIES.md §5): such a file
 * gets an UNSUPPORTED_EXTENSION note, not errors.
 */
export async function validateGltf(bytes: Uint8Array): Promise<ValidatorVerdict> {
  const require = createRequire(import.meta.url);
  const validator = require('gltf-validator') as { validateBytes(data: Uint8Array, options?: { maxIssues?: number }): Promise<GltfValidatorReport> };
  const r = await validator.validateBytes(bytes, { maxIssues: 20 });
  return {
    errors: r.issues.numErrors,
    warnings: r.issues.numWarnings,
    infos: r.issues.numInfos,
    messages: r.issues.messages.slice(0, 5).map((m) => `${m.code}: ${m.message}`),
    validatorVersion: r.validatorVersion,
  };
}

/** A message for the window: FieldkilnError's own words, others prefixed so a bug reads as one. */
export function plainWords(e: unknown): string {
  if (e instanceof FieldkilnError) return e.message;
  const msg = e instanceof Error ? e.message : String(e);
  return `something went wrong inside Fieldkiln: ${msg}`;
}

// `SAMPLE_OCTREE_DEFAULTS` bounds the depths the window offers.
if (APP_DEPTHS.max > SAMPLE_OCTREE_DEFAULTS.maxDepth || APP_DEPTHS.min < SAMPLE_OCTREE_DEFAULTS.minDepth) {
  throw new Error('bakeWorker: APP_DEPTHS lies outside the sampler depth range');
}
