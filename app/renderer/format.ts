/** Formatting of figures for the window: counts, sizes, lengths, levels, stage names. */

/** `48212` → `48,212`. */
export function formatCount(n: number): string {
  return Math.round(n).toLocaleString('en-US');
}

/** File size in B, kB, MB (powers of 1000, as file managers show them). */
export function formatBytes(bytes: number): string {
  if (bytes < 1000) return `${bytes} B`;
  if (bytes < 1e6) return `${(bytes / 1e3).toFixed(1)} kB`;
  return `${(bytes / 1e6).toFixed(2)} MB`;
}

/** A length in metres, shown in m, cm or mm, whichever reads best. */
export function formatLength(m: number): string {
  const a = Math.abs(m);
  if (a >= 1) return `${trim(m, 3)} m`;
  if (a >= 0.01) return `${trim(m * 100, 3)} cm`;
  return `${trim(m * 1000, 3)} mm`;
}

/** A field value with about four significant figures. */
export function formatValue(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-4) return v.toExponential(3);
  return trim(v, 4);
}

/** Seconds, e.g. `0.42 s`, `12 ms`. */
export function formatSeconds(s: number): string {
  if (s < 0.1) return `${Math.round(s * 1000)} ms`;
  return `${s.toFixed(2)} s`;
}

function trim(v: number, sig: number): string {
  return Number(v.toPrecision(sig)).toString();
}

/** What each pipeline stage is doing, in the window's words. Unknown stages keep their own name. */
const STAGE_WORDS: Record<string, string> = {
  open: 'Opening the field',
  probe: 'Surveying its values',
  sample: 'Sampling the field',
  extract: 'Building triangles',
  cleanup: 'Cleaning up',
  normals: 'Finding normals',
  decimate: 'Reducing triangles',
  bake: 'Painting colors',
  color: 'Painting colors',
  texture: 'Baking texture maps',
  collision: 'Building the collision hull',
  check: 'Checking the surface',
  export: 'Writing the file',
  validate: 'Validating the glTF',
  done: 'Finishing',
};

/** A stage name for people: `sample` → `Sampling the field`. */
export function stageWords(stage: string): string {
  return STAGE_WORDS[stage] ?? stage.charAt(0).toUpperCase() + stage.slice(1).replace(/[-_]/g, ' ');
}

/**
 * A message with its first letter raised (core's messages start in lower case), unless it starts
 * with a file name (`ball.onnx: …`), which keeps its spelling.
 */
export function sentence(text: string): string {
  const t = text.trim();
  const first = /^\S+/.exec(t)?.[0] ?? '';
  if (/[./\\_]/.test(first.replace(/[:,]$/, ''))) return t;
  return t.charAt(0).toUpperCase() + t.slice(1);
}
