/**
 * The window: binds the five steps (field, surface, shape, check, export) and the preview to
 * `window.api` (the preload's few functions). Sees only plain objects and typed arrays.
 */
import type { Bounds } from '../../core/types.js';
import type { BakeQuality, BakeResult, BakeSettings, ExportFormat, ExportResult, FieldInfo, MeshPayload, ProgressEvent, Reply } from '../shared/ipc.js';
import { formatBytes, formatCount, formatLength, formatSeconds, formatValue, sentence, stageWords } from './format.js';
import { createLiveBake } from './live-bake.js';
import { createViewport } from './viewport.js';

const api = window.api;
const $ = <T extends HTMLElement = HTMLElement>(id: string): T => {
  const el = document.getElementById(id);
  if (!el) throw new Error(`renderer: #${id} is missing from index.html`);
  return el as T;
};

const el = {
  stage: $('stage'),
  canvas: $<HTMLCanvasElement>('view'),
  currentFile: $('current-file'),
  openField: $<HTMLButtonElement>('open-field'),
  frame: $<HTMLButtonElement>('tool-frame'),
  showColors: $<HTMLInputElement>('show-colors'),
  showWire: $<HTMLInputElement>('show-wire'),
  showBounds: $<HTMLInputElement>('show-bounds'),
  showFlaws: $<HTMLInputElement>('show-flaws'),
  lodPick: $('lod-pick'),
  lodSelect: $<HTMLSelectElement>('lod-select'),
  triCount: $('tri-count'),
  qualityTag: $('quality-tag'),
  readoutVerdict: $('readout-verdict'),
  flawLegend: $('flaw-legend'),
  legendOpen: $('legend-open'),
  legendShared: $('legend-shared'),
  notice: $('notice'),
  noticeText: $('notice-text'),
  noticeDetail: $('notice-detail'),
  noticeClose: $<HTMLButtonElement>('notice-close'),
  dropHint: $('drop-hint'),
  busy: $('busy'),
  busyStage: $('busy-stage'),
  busyPct: $('busy-pct'),
  busyBar: $<HTMLProgressElement>('busy-bar'),
  busyStop: $<HTMLButtonElement>('busy-stop'),
  factName: $('fact-name'),
  factKind: $('fact-kind'),
  factSize: $('fact-size'),
  factOutputs: $('fact-outputs'),
  factValues: $('fact-values'),
  recent: $('recent'),
  recentList: $('recent-list'),
  level: $<HTMLInputElement>('level'),
  levelNum: $<HTMLInputElement>('level-num'),
  levelLo: $('level-lo'),
  levelHi: $('level-hi'),
  levelHint: $('level-hint'),
  depth: $<HTMLInputElement>('depth'),
  depthOut: $('depth-out'),
  method: $<HTMLSelectElement>('method'),
  region: [0, 1, 2, 3, 4, 5].map((i) => $<HTMLInputElement>(`region-${i}`)),
  regionReset: $<HTMLButtonElement>('region-reset'),
  lipschitzRow: $('lipschitz-row'),
  lipschitz: $<HTMLInputElement>('lipschitz'),
  startDepthRow: $('start-depth-row'),
  startDepth: $<HTMLInputElement>('start-depth'),
  nonfinite: $<HTMLSelectElement>('nonfinite'),
  exportLodNote: $('export-lod-note'),
  normalsRow: $('normals-row'),
  normals: $<HTMLSelectElement>('normals'),
  gltfOptions: $('gltf-options'),
  exportQuantize: $<HTMLInputElement>('export-quantize'),
  exportMeshopt: $<HTMLInputElement>('export-meshopt'),
  exportTexture: $<HTMLSelectElement>('export-texture'),
  exportCollision: $<HTMLInputElement>('export-collision'),
  stepShape: $('step-shape'),
  budget: $<HTMLInputElement>('budget'),
  budgetNum: $<HTMLInputElement>('budget-num'),
  lods: $<HTMLInputElement>('lods'),
  minPart: $<HTMLInputElement>('min-part'),
  minPartOut: $('min-part-out'),
  shapeNote: $('shape-note'),
  verdict: $('verdict'),
  checkTriangles: $('check-triangles'),
  checkPieces: $('check-pieces'),
  checkGenus: $('check-genus'),
  checkError: $('check-error'),
  checkArea: $('check-area'),
  checkVolume: $('check-volume'),
  timings: $('timings'),
  warnings: $('warnings'),
  exportFormat: $<HTMLSelectElement>('export-format'),
  exportName: $<HTMLInputElement>('export-name'),
  exportColors: $<HTMLInputElement>('export-colors'),
  exportSave: $<HTMLButtonElement>('export-save'),
  exportResult: $('export-result'),
};

const view = createViewport(el.canvas, el.stage);

// ---------------------------------------------------------------------------------------------
// State

let info: FieldInfo | null = null;
let shown: BakeResult | null = null;
let lodIndex = 0;
let frameNext = true;
let stopRequested = false;
/** Jobs in flight that show the progress panel (open, full bake, export). */
let busyJobs = 0;
let busyTimer: number | undefined;

/** Budget slider: position 0 = no limit, 1..1000 = 1 000 … 2 000 000 triangles on a log scale. */
const BUDGET_MIN = 1000;
const BUDGET_MAX = 2_000_000;
const budgetFromSlider = (pos: number) => (pos <= 0 ? 0 : Math.round(BUDGET_MIN * (BUDGET_MAX / BUDGET_MIN) ** (pos / 1000)));
const sliderFromBudget = (b: number) => (b <= 0 ? 0 : Math.round((1000 * Math.log(Math.min(Math.max(b, BUDGET_MIN), BUDGET_MAX) / BUDGET_MIN)) / Math.log(BUDGET_MAX / BUDGET_MIN)));
let budget = 0;

/** The sampling region when the user changed it (null: the field's own bounds). */
let region: Bounds | null = null;

const optionalNumber = (input: HTMLInputElement): number | null => {
  const v = Number(input.value);
  return input.value.trim() === '' || !Number.isFinite(v) ? null : v;
};

const settings = (): BakeSettings => ({
  level: Number(el.levelNum.value),
  depth: Number(el.depth.value),
  method: el.method.value,
  budget: info?.shaping.budget ? budget : 0,
  lods: info?.shaping.lods ? clampInt(Number(el.lods.value), 0, 4) : 0,
  minPart: info?.shaping.minPart ? Number(el.minPart.value) / 100 : 0,
  normals: el.normals.value === 'mesh' ? 'mesh' : 'field',
  bounds: region,
  lipschitz: info?.kind === 'sdf' ? positiveOrNull(optionalNumber(el.lipschitz)) : null,
  startDepth: info && info.kind !== 'sdf' ? intOrNull(optionalNumber(el.startDepth), 0, 12) : null,
  nonfinite: el.nonfinite.value === 'outside' ? 'outside' : 'error',
});

function positiveOrNull(v: number | null): number | null {
  return v !== null && v > 0 ? v : null;
}
function intOrNull(v: number | null, lo: number, hi: number): number | null {
  return v === null ? null : clampInt(v, lo, hi);
}

// ---------------------------------------------------------------------------------------------
// Notices and the progress panel

function showNotice(text: string, kind: 'error' | 'info', detail = ''): void {
  el.noticeText.textContent = text;
  el.noticeDetail.textContent = detail;
  el.noticeDetail.hidden = detail === '';
  el.notice.classList.toggle('info', kind === 'info');
  el.notice.dataset.kind = kind;
  el.notice.hidden = false;
}
function hideNotice(kind?: 'error' | 'info'): void {
  if (!kind || el.notice.dataset.kind === kind) el.notice.hidden = true;
}
el.noticeClose.addEventListener('click', () => hideNotice());

function beginBusy(): void {
  busyJobs++;
  document.body.dataset.busy = 'true';
  if (busyTimer === undefined && el.busy.hidden) {
    // Short jobs finish before the panel would show; it appears only for work that takes a while.
    busyTimer = window.setTimeout(() => {
      busyTimer = undefined;
      if (busyJobs > 0) el.busy.hidden = false;
    }, 200);
  }
}
function endBusy(): void {
  busyJobs = Math.max(0, busyJobs - 1);
  if (busyJobs === 0) {
    document.body.dataset.busy = 'false';
    if (busyTimer !== undefined) window.clearTimeout(busyTimer);
    busyTimer = undefined;
    el.busy.hidden = true;
    el.busyBar.value = 0;
    el.busyPct.textContent = '';
  }
}

api.onProgress((e: ProgressEvent) => {
  if (e.job === 'preview') return;
  el.busyStage.textContent = stageWords(e.stage);
  el.busyBar.value = Math.min(1, Math.max(0, e.fraction));
  el.busyPct.textContent = e.fraction > 0 ? `${Math.round(e.fraction * 100)} %` : '';
});

el.busyStop.addEventListener('click', () => {
  stopRequested = true;
  el.busyStage.textContent = 'Stopping…';
  void api.cancel();
});

function cancelledNotice(): void {
  if (!stopRequested) return;
  stopRequested = false;
  showNotice(shown ? 'Stopped. The last finished mesh stays on screen.' : 'Stopped.', 'info');
  // The controls go back to the mesh on screen, so what they say is what an export would write.
  if (shown?.quality === 'full') {
    el.depth.value = String(shown.depth);
    showDepth();
    el.level.value = String(shown.level);
    el.levelNum.value = String(shown.level);
  }
}

// ---------------------------------------------------------------------------------------------
// Baking

const live = createLiveBake({
  settings,
  bake: (request) => api.bake(request),
  onResult: showResult,
  onError: (message, quality: BakeQuality) => {
    showNotice(`Couldn't make the ${quality === 'preview' ? 'preview' : 'mesh'}. ${sentence(message)}`, 'error');
    el.verdict.classList.add('stale');
  },
  onBusy: (_quality, isBusy) => (isBusy ? beginBusy() : endBusy()),
  onCancelled: () => cancelledNotice(),
});

function meshOf(r: BakeResult, lod: number): MeshPayload {
  return lod > 0 && r.lods[lod - 1] ? r.lods[lod - 1] : r.mesh;
}

function showResult(r: BakeResult): void {
  shown = r;
  hideNotice('error');
  // Levels of detail, when core made them.
  if (r.lods.length > 0) {
    el.lodSelect.replaceChildren(
      ...[r.mesh, ...r.lods].map((m, i) => {
        const err = i > 0 && Number.isFinite(r.lodErrorsMm[i - 1]) ? ` · ${formatValue(r.lodErrorsMm[i - 1])} mm` : '';
        return new Option(`${i === 0 ? 'Full' : `LOD ${i}`} · ${formatCount(m.indices.length / 3)}${err}`, String(i));
      }),
    );
    if (lodIndex > r.lods.length) lodIndex = 0;
    el.lodSelect.value = String(lodIndex);
    el.lodPick.hidden = false;
  } else {
    lodIndex = 0;
    el.lodPick.hidden = true;
  }
  showLodNote();
  const mesh = meshOf(r, lodIndex);
  view.showMesh(mesh, frameNext);
  frameNext = false;
  view.showProblemEdges(r.problemEdges.open, r.problemEdges.nonManifold);
  el.flawLegend.hidden = r.problemEdges.open.length + r.problemEdges.nonManifold.length === 0;
  el.legendOpen.hidden = r.problemEdges.open.length === 0;
  el.legendShared.hidden = r.problemEdges.nonManifold.length === 0;

  el.triCount.textContent = formatCount(mesh.indices.length / 3);
  el.qualityTag.textContent = r.quality === 'preview' ? `preview · detail ${r.depth}` : `detail ${r.depth}`;
  el.qualityTag.classList.toggle('preview', r.quality === 'preview');
  el.readoutVerdict.textContent = r.verdict.watertight ? '✓ watertight' : '✗ has holes';
  el.readoutVerdict.className = r.verdict.watertight ? 'seal good' : 'seal bad';
  showVerdict(r);
}

function showVerdict(r: BakeResult): void {
  const v = r.verdict;
  el.verdict.classList.remove('stale');
  el.verdict.classList.toggle('good', v.watertight);
  el.verdict.classList.toggle('bad', !v.watertight);
  const problems: string[] = [];
  if (v.boundaryEdges > 0) problems.push(`${formatCount(v.boundaryEdges)} open edges`);
  if (v.nonManifoldEdges > 0) problems.push(`${formatCount(v.nonManifoldEdges)} edges shared by 3+ triangles`);
  el.verdict.textContent = v.watertight ? '✓ Closed and watertight' : `✗ Not watertight${problems.length ? `: ${problems.join(', ')}` : ''}`;
  if (r.quality === 'preview') el.verdict.textContent += ' (preview)';
  el.checkTriangles.textContent = `${formatCount(v.triangles)} (${formatCount(v.vertices)} vertices)`;
  el.checkPieces.textContent = formatCount(v.components);
  el.checkGenus.textContent = v.genus === null ? 'unknown (not closed)' : String(v.genus);
  el.checkError.textContent = v.errorMm === null ? '— (no shaping)' : `${formatValue(v.errorMm)} mm`;
  el.checkArea.textContent = `${formatValue(v.area)} m²`;
  el.checkVolume.textContent = `${formatValue(v.volume)} m³`;

  const total = v.timings.find(([k]) => k === 'total')?.[1] ?? v.timings.reduce((s, [, t]) => s + t, 0);
  const rows: HTMLElement[] = [];
  for (const [stage, secs] of v.timings) {
    const label = document.createElement('span');
    label.className = stage === 'total' ? 'label total' : 'label';
    label.textContent = stage;
    const bar = document.createElement('span');
    bar.className = 'bar';
    if (stage === 'total') bar.style.opacity = '0';
    else bar.style.width = `${Math.max(1, (100 * secs) / Math.max(total, 1e-6))}%`;
    const time = document.createElement('span');
    time.className = stage === 'total' ? 'secs total' : 'secs';
    time.textContent = formatSeconds(secs);
    rows.push(label, bar, time);
  }
  el.timings.replaceChildren(...rows);
  el.warnings.replaceChildren(
    ...v.warnings.map((w) => {
      const li = document.createElement('li');
      li.textContent = sentence(w);
      return li;
    }),
  );
}

function showLodNote(): void {
  const copies = shown?.lods.length ?? 0;
  el.exportLodNote.hidden = copies === 0;
  el.exportLodNote.textContent =
    lodIndex === 0 ? `Writes the full mesh with its ${copies} lighter copies as levels of detail.` : `Writes LOD ${lodIndex} alone (the level shown).`;
}

el.lodSelect.addEventListener('change', () => {
  lodIndex = Number(el.lodSelect.value);
  showLodNote();
  if (shown) {
    const mesh = meshOf(shown, lodIndex);
    view.showMesh(mesh, false);
    el.triCount.textContent = formatCount(mesh.indices.length / 3);
  }
});

// ---------------------------------------------------------------------------------------------
// Opening fields

const NORMALS_WORDS: Record<string, string> = { field: 'from the field', mesh: 'from the triangles' };
const FORMAT_WORDS: Record<string, string> = {
  glb: 'GLB · binary glTF 2.0',
  gltf: 'glTF · one JSON file',
  ply: 'PLY · with colors',
  obj: 'OBJ · Wavefront',
  stl: 'STL · shape only',
};

function showFormatOptions(): void {
  const f = el.exportFormat.value;
  el.gltfOptions.hidden = !(f === 'glb' || f === 'gltf');
  el.exportColors.disabled = !info?.hasColor || f === 'stl';
}
el.exportFormat.addEventListener('change', showFormatOptions);
el.exportMeshopt.addEventListener('change', () => {
  if (el.exportMeshopt.checked) el.exportQuantize.checked = true; // meshopt implies quantization
});
el.normals.addEventListener('change', () => live.full());

const KIND_WORDS: Record<FieldInfo['kind'], string> = {
  sdf: 'signed distance (SDF)',
  density: 'density',
  occupancy: 'occupancy (logits)',
};
const SOURCE_WORDS: Record<string, string> = { onnx: 'neural network (ONNX)', grid: 'voxel grid (.npy)', recipe: 'recipe' };

async function openWith(request: Promise<Reply<FieldInfo | null>>): Promise<void> {
  beginBusy();
  let reply: Reply<FieldInfo | null>;
  try {
    reply = await request;
  } catch (e) {
    reply = { ok: false, error: e instanceof Error ? e.message : String(e) };
  } finally {
    endBusy();
  }
  if (!reply.ok) {
    showNotice(`Couldn't open that field. ${sentence(reply.error)}`, 'error', info ? `${info.name} is still open.` : '');
    return;
  }
  if (reply.value) applyField(reply.value);
}

function applyField(f: FieldInfo): void {
  info = f;
  shown = null;
  frameNext = true;
  lodIndex = 0;
  hideNotice();
  el.currentFile.textContent = f.path;
  el.currentFile.title = f.path;
  el.factName.textContent = f.name;
  el.factKind.textContent = `${KIND_WORDS[f.kind]}, from a ${SOURCE_WORDS[f.source] ?? f.source}`;
  const b = f.bounds;
  el.factSize.textContent = `${formatLength(b[3] - b[0])} × ${formatLength(b[4] - b[1])} × ${formatLength(b[5] - b[2])}`;
  el.factOutputs.textContent = f.outputs.join(', ') + (f.hasColor ? ' (with color)' : '');
  el.factValues.textContent = `${formatValue(f.valueRange[0])} to ${formatValue(f.valueRange[1])}`;

  const others = f.recent.filter((r) => r.path !== f.path);
  el.recent.hidden = others.length === 0;
  el.recentList.replaceChildren(
    ...others.map((r) => {
      const li = document.createElement('li');
      const button = document.createElement('button');
      button.type = 'button';
      button.textContent = r.name;
      button.title = r.path;
      button.addEventListener('click', () => void openWith(api.openRecent(r.path)));
      li.append(button);
      return li;
    }),
  );

  const [lo, hi] = f.levelRange;
  el.level.min = String(lo);
  el.level.max = String(hi);
  el.level.step = String((hi - lo) / 1000);
  el.level.value = String(f.startLevel);
  el.levelNum.value = String(f.startLevel);
  el.levelLo.textContent = formatValue(lo);
  el.levelHi.textContent = formatValue(hi);
  el.levelHint.textContent = f.declaredLevel !== null ? `file says ${formatValue(f.declaredLevel)}` : 'no level in the file';

  el.depth.min = String(f.depth.min);
  el.depth.max = String(f.depth.max);
  el.depth.value = String(f.depth.start);
  showDepth();
  el.method.replaceChildren(...f.methods.map((m) => new Option(m.replace(/-/g, ' '), m)));
  region = null;
  showRegion(f.bounds);
  el.lipschitz.value = '';
  el.startDepth.value = '';
  el.lipschitzRow.hidden = f.kind !== 'sdf';
  el.startDepthRow.hidden = f.kind === 'sdf';
  el.nonfinite.value = 'error';

  const anyShaping = f.shaping.budget || f.shaping.lods || f.shaping.minPart;
  el.budget.disabled = el.budgetNum.disabled = !f.shaping.budget;
  el.lods.disabled = !f.shaping.lods;
  el.minPart.disabled = !f.shaping.minPart;
  el.stepShape.classList.toggle('disabled', !anyShaping);
  el.shapeNote.hidden = anyShaping;
  el.shapeNote.textContent = 'This build of Fieldkiln cannot shape meshes yet: the budget, LOD and clean-up options arrive with a later core update.';
  showBudget();
  showMinPart();

  el.normals.replaceChildren(...f.normalsMethods.map((m) => new Option(NORMALS_WORDS[m] ?? m, m)));
  el.normalsRow.hidden = f.normalsMethods.length === 0;
  el.exportFormat.replaceChildren(...f.exportFormats.map((m) => new Option(FORMAT_WORDS[m] ?? m, m)));
  el.exportFormat.value = 'glb';
  showFormatOptions();
  el.exportName.value = f.name.replace(/(\.recipe)?\.[A-Za-z0-9]+$/, '') || 'mesh';
  el.exportColors.checked = f.hasColor;
  el.exportResult.replaceChildren();
  el.verdict.className = 'verdict';
  el.verdict.textContent = 'Baking…';

  view.showBounds(f.bounds);
  live.preview();
  live.settle();
}

function showRegion(b: Bounds): void {
  el.region.forEach((input, i) => {
    input.value = String(Number(b[i].toPrecision(6)));
    input.classList.remove('wrong');
  });
}

/** Reads the region boxes: the bounds, or a sentence naming what is wrong. */
function readRegion(): Bounds | string {
  const v = el.region.map((input) => Number(input.value));
  el.region.forEach((input, i) => input.classList.toggle('wrong', input.value.trim() === '' || !Number.isFinite(v[i])));
  if (el.region.some((input, i) => input.value.trim() === '' || !Number.isFinite(v[i]))) return 'each side of the region needs a number';
  for (let a = 0; a < 3; a++) {
    if (!(v[a] < v[a + 3])) {
      el.region[a].classList.add('wrong');
      el.region[a + 3].classList.add('wrong');
      return `the region's ${'xyz'[a]} "from" must be below its "to"`;
    }
  }
  return v as Bounds;
}

function showDepth(): void {
  const d = Number(el.depth.value);
  el.depthOut.textContent = `${d} · ${formatCount(2 ** d)} cells across`;
}
function showBudget(): void {
  el.budget.value = String(sliderFromBudget(budget));
  el.budgetNum.value = budget > 0 ? String(budget) : '';
  el.budgetNum.placeholder = 'no limit';
}
function showMinPart(): void {
  const p = Number(el.minPart.value);
  el.minPartOut.textContent = p > 0 ? `${p.toFixed(1)} % of the largest` : 'keep all';
}

// ---------------------------------------------------------------------------------------------
// Controls

/** The level the slider points at, to four significant figures: what the box shows is what gets baked. */
const sliderLevel = () => String(Number(Number(el.level.value).toPrecision(4)));
el.level.addEventListener('input', () => {
  el.levelNum.value = sliderLevel();
  live.preview();
});
el.level.addEventListener('change', () => {
  el.levelNum.value = sliderLevel();
  live.settle();
});
el.levelNum.addEventListener('change', () => {
  const v = Number(el.levelNum.value);
  if (!Number.isFinite(v) || el.levelNum.value.trim() === '') {
    el.levelNum.value = el.level.value;
    return;
  }
  el.level.value = String(v);
  live.full();
});
for (const input of el.region) {
  input.addEventListener('change', () => {
    if (!info) return;
    const r = readRegion();
    if (typeof r === 'string') {
      showNotice(`Can't use that region: ${r}.`, 'error');
      return;
    }
    hideNotice('error');
    region = r.every((x, i) => x === info!.bounds[i]) ? null : r;
    view.showBounds(region ?? info.bounds);
    live.full();
  });
}
el.regionReset.addEventListener('click', () => {
  if (!info) return;
  region = null;
  showRegion(info.bounds);
  view.showBounds(info.bounds);
  live.full();
});
el.lipschitz.addEventListener('change', () => live.full());
el.startDepth.addEventListener('change', () => live.full());
el.nonfinite.addEventListener('change', () => live.full());
el.depth.addEventListener('input', showDepth);
el.depth.addEventListener('change', () => live.full());
el.method.addEventListener('change', () => live.full());
el.budget.addEventListener('input', () => {
  budget = budgetFromSlider(Number(el.budget.value));
  el.budgetNum.value = budget > 0 ? String(budget) : '';
});
el.budget.addEventListener('change', () => live.full());
el.budgetNum.addEventListener('change', () => {
  const v = Math.round(Number(el.budgetNum.value));
  budget = Number.isFinite(v) && v > 0 ? Math.min(v, 50_000_000) : 0;
  showBudget();
  live.full();
});
el.lods.addEventListener('change', () => {
  el.lods.value = String(clampInt(Number(el.lods.value), 0, 4));
  live.full();
});
el.minPart.addEventListener('input', showMinPart);
el.minPart.addEventListener('change', () => live.full());

el.showColors.addEventListener('change', () => view.setColors(el.showColors.checked));
el.showWire.addEventListener('change', () => view.setWireframe(el.showWire.checked));
el.showBounds.addEventListener('change', () => view.setBoundsVisible(el.showBounds.checked));
el.showFlaws.addEventListener('change', () => view.setFlawsVisible(el.showFlaws.checked));
el.frame.addEventListener('click', () => view.frame());
el.openField.addEventListener('click', () => void openWith(api.openField()));

window.addEventListener('keydown', (e) => {
  const t = e.target as HTMLElement | null;
  if (t && (t.tagName === 'INPUT' || t.tagName === 'SELECT' || t.tagName === 'TEXTAREA')) return;
  if ((e.key === 'f' || e.key === 'F') && !e.ctrlKey && !e.metaKey && !e.altKey) view.frame();
});

// Drag and drop: the preload turns the dropped File into its path; the main process opens it.
window.addEventListener('dragover', (e) => {
  e.preventDefault();
  if (e.dataTransfer) e.dataTransfer.dropEffect = 'copy';
  el.dropHint.hidden = false;
});
window.addEventListener('dragleave', (e) => {
  if (!e.relatedTarget) el.dropHint.hidden = true;
});
window.addEventListener('drop', (e) => {
  e.preventDefault();
  el.dropHint.hidden = true;
  const file = e.dataTransfer?.files[0];
  if (file) void openWith(api.openDropped(file));
});

// ---------------------------------------------------------------------------------------------
// Export

el.exportSave.addEventListener('click', () => void exportMesh());

async function exportMesh(): Promise<void> {
  if (!info) {
    showNotice('Open a field first, then export its mesh.', 'info');
    return;
  }
  const name = el.exportName.value.trim() || 'mesh';
  el.exportSave.disabled = true;
  beginBusy();
  let reply: Reply<ExportResult | null>;
  try {
    const format = (info.exportFormats as string[]).includes(el.exportFormat.value) ? (el.exportFormat.value as ExportFormat) : 'glb';
    const gltf = format === 'glb' || format === 'gltf';
    reply = await api.exportMesh({
      settings: settings(),
      format,
      colors: el.exportColors.checked && info.hasColor && format !== 'stl',
      quantize: gltf && el.exportQuantize.checked,
      meshopt: gltf && el.exportMeshopt.checked,
      name: name.slice(0, 64),
      lod: lodIndex,
      texture: gltf && el.exportTexture.value !== '' ? Number(el.exportTexture.value) : null,
      collision: gltf && el.exportCollision.checked,
    });
  } catch (e) {
    reply = { ok: false, error: e instanceof Error ? e.message : String(e) };
  } finally {
    endBusy();
    el.exportSave.disabled = false;
  }
  if (!reply.ok) {
    if (reply.cancelled) cancelledNotice();
    else showNotice(`Couldn't export. ${sentence(reply.error)}`, 'error');
    return;
  }
  if (reply.value) showExport(reply.value);
}

function showExport(r: ExportResult): void {
  const saved = document.createElement('div');
  const file = r.path.split(/[\\/]/).pop() ?? r.path;
  saved.textContent = `Saved ${file} · ${formatBytes(r.bytes)}`;
  saved.title = r.path;
  const verdict = document.createElement('div');
  const v = r.validator;
  if (v === null) {
    verdict.textContent = `${r.format.toUpperCase()} files have no validator; the Check step above describes the mesh.`;
    el.exportResult.replaceChildren(saved, verdict);
    return;
  }
  const clean = v.errors === 0;
  verdict.className = clean ? 'ok' : 'fail';
  verdict.textContent = clean
    ? `✓ glTF validator: valid (${v.warnings} warnings, ${v.infos} notes)`
    : `✗ glTF validator: ${v.errors} errors, ${v.warnings} warnings`;
  const parts: HTMLElement[] = [saved, verdict];
  if (r.texture || r.collision) {
    const extras = document.createElement('div');
    extras.textContent = [
      r.texture ? `Texture maps ${r.texture.size} × ${r.texture.size} · ${(100 * r.texture.coverage).toFixed(1)}% of texels used` : '',
      r.collision ? `Collision hull ${formatCount(r.collision.triangles)} triangles` : '',
    ]
      .filter((t) => t !== '')
      .join(' · ');
    parts.push(extras);
  }
  if (v.messages.length > 0) {
    const ul = document.createElement('ul');
    for (const m of v.messages) {
      const li = document.createElement('li');
      li.textContent = m;
      ul.append(li);
    }
    parts.push(ul);
  }
  el.exportResult.replaceChildren(...parts);
}

// ---------------------------------------------------------------------------------------------
// Menu and start

api.onMenu(({ command }) => {
  if (command === 'open') void openWith(api.openField());
  else if (command === 'export') void exportMesh();
  else if (command === 'frame') view.frame();
});

function clampInt(v: number, lo: number, hi: number): number {
  return Number.isFinite(v) ? Math.min(hi, Math.max(lo, Math.round(v))) : lo;
}

document.body.dataset.busy = 'false';
void openWith(api.openStartup());
