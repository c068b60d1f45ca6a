/**
 * Reads a recipe file's text, checks it against the schema in `recipe-schema.ts`, and returns the
 * normalized tree. Recipes are data: the text goes through `JSON.parse` only, never through any script
 * evaluation, and only properties named by the schema are read (own properties, so `__proto__` or
 * `constructor` keys are rejected as unknown rather than followed).
 *
 * Every error is a `FieldkilnError` whose message starts with `recipe:` and names the JSON path of the
 * bad value in JSONPath dot notation, e.g. `recipe: $.root.children[2].radius must be a positive number (got -0.1)`.
 * Checks run top-down in document order; the first problem found is reported.
 */
import { FieldkilnError, boundsProblem, type Bounds } from '../../types.js';
import {
  DEFAULT_RECIPE_COLOR,
  MAX_RECIPE_DEPTH,
  RECIPE_COMMON_PROPERTIES,
  RECIPE_FORMAT,
  RECIPE_NODE_PROPERTIES,
  RECIPE_NODE_TYPES,
  RECIPE_TOP_LEVEL_PROPERTIES,
  RECIPE_VERSION,
  type Recipe,
  type RecipeNode,
  type RecipeNodeCommon,
  type RecipeNodeType,
  type RecipeRotation,
  type Vec3,
} from './recipe-schema.js';
import { autoRecipeBounds, isBoxBounded, isBoxEmpty, recipeBounds } from './recipe-bounds.js';
import { findJsonSyntaxError, lineColumnAt } from './find-json-syntax-error.js';

export { MAX_RECIPE_DEPTH };

type JsonObject = Record<string, unknown>;

/** Throws the recipe error for `path`. */
function fail(path: string, problem: string): never {
  throw new FieldkilnError(`recipe: ${path} ${problem}`);
}

/** Shortest readable form of a number for messages (no 0.30000000000000004). */
function fmt(x: number): string {
  return String(Number(x.toPrecision(6)));
}

/** A value as shown after "got" in messages. */
function show(value: unknown): string {
  if (value === undefined) return 'nothing';
  if (typeof value === 'number') return String(value);
  const s = JSON.stringify(value);
  return s.length > 60 ? `${s.slice(0, 57)}...` : s;
}

/** What kind of JSON value this is, with its article. */
function kindOf(value: unknown): string {
  if (value === null) return 'null';
  if (Array.isArray(value)) return 'an array';
  if (typeof value === 'object') return 'an object';
  return `a ${typeof value}`;
}

function isObject(value: unknown): value is JsonObject {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

/** Own property only: a missing key never reads through to Object.prototype. */
function own(obj: JsonObject, key: string): unknown {
  return Object.prototype.hasOwnProperty.call(obj, key) ? obj[key] : undefined;
}

/** `$.a` for plain keys, `$["odd key"]` otherwise. */
function child(path: string, key: string): string {
  return /^[A-Za-z_$][A-Za-z0-9_$]*$/.test(key) ? `${path}.${key}` : `${path}[${JSON.stringify(key)}]`;
}

/** Rejects properties outside `allowed`, naming the first stranger and listing what is allowed. */
function rejectUnknown(obj: JsonObject, allowed: readonly string[], path: string, owner: string): void {
  for (const key of Object.keys(obj)) {
    if (!allowed.includes(key)) {
      fail(child(path, key), `is not a property of ${owner} (allowed: ${allowed.join(', ')}); check the spelling`);
    }
  }
}

/** A finite number, or an error naming `path`. `need` completes "must be ...". */
function finiteNumber(value: unknown, path: string, need: string, owner: string): number {
  if (value === undefined) fail(path, `is missing: ${owner} needs it (${need})`);
  if (typeof value !== 'number') fail(path, `must be ${need} (got ${show(value)})`);
  if (!Number.isFinite(value)) fail(path, `must be a finite number (got ${show(value)})`);
  return value;
}

function positiveNumber(obj: JsonObject, key: string, path: string, owner: string): number {
  const p = child(path, key);
  const v = finiteNumber(own(obj, key), p, 'a positive number', owner);
  if (!(v > 0)) fail(p, `must be a positive number (got ${show(v)})`);
  return v;
}

/** Three numbers; `positive` also requires each > 0. */
function vec3(obj: JsonObject, key: string, path: string, owner: string, positive: boolean): Vec3 {
  const p = child(path, key);
  const value = own(obj, key);
  const need = positive ? 'an array of 3 positive numbers' : 'an array of 3 numbers';
  if (value === undefined) fail(p, `is missing: ${owner} needs it (${need})`);
  if (!Array.isArray(value) || value.length !== 3) fail(p, `must be ${need} (got ${show(value)})`);
  const out: Vec3 = [0, 0, 0];
  for (let i = 0; i < 3; i++) {
    const ep = `${p}[${i}]`;
    out[i] = finiteNumber(value[i], ep, positive ? 'a positive number' : 'a number', owner);
    if (positive && !(out[i] > 0)) fail(ep, `must be a positive number (got ${show(out[i])})`);
  }
  return out;
}

/** A non-zero direction, returned at unit length. */
function direction(obj: JsonObject, key: string, path: string, owner: string): Vec3 {
  const v = vec3(obj, key, path, owner, false);
  const len = Math.hypot(v[0], v[1], v[2]);
  if (!(len > 0) || !Number.isFinite(len)) fail(child(path, key), `must not be the zero vector: it has to point somewhere (got ${show(v)})`);
  return [v[0] / len, v[1] / len, v[2] / len];
}

/** Reads translate, rotate, scale and color; color falls back to `parentColor`. */
function parseCommon(obj: JsonObject, path: string, owner: string, parentColor: Vec3): RecipeNodeCommon {
  const translate: Vec3 = own(obj, 'translate') === undefined ? [0, 0, 0] : vec3(obj, 'translate', path, owner, false);

  let rotate: RecipeRotation | null = null;
  const r = own(obj, 'rotate');
  if (r !== undefined) {
    const rp = child(path, 'rotate');
    if (!isObject(r)) fail(rp, `must be an object { "axis": [x, y, z], "degrees": a } (got ${show(r)})`);
    rejectUnknown(r, ['axis', 'degrees'], rp, 'a rotation');
    const axis = direction(r, 'axis', rp, 'a rotation');
    const degrees = finiteNumber(own(r, 'degrees'), child(rp, 'degrees'), 'a number of degrees', 'a rotation');
    rotate = { axis, degrees };
  }

  let scale = 1;
  const s = own(obj, 'scale');
  if (s !== undefined) {
    const sp = child(path, 'scale');
    if (Array.isArray(s)) {
      fail(
        sp,
        `must be a single positive number (got ${show(s)}): only uniform scale is allowed, because stretching one axis more than ` +
          `another stretches distances unevenly, so values would no longer be distances in metres (the field would break its ` +
          `distance property); change the primitive's own sizes instead`,
      );
    }
    scale = positiveNumber(obj, 'scale', path, owner);
  }

  let color: Vec3 = [parentColor[0], parentColor[1], parentColor[2]];
  if (own(obj, 'color') !== undefined) {
    color = vec3(obj, 'color', path, owner, false);
    for (let i = 0; i < 3; i++) {
      if (color[i] < 0 || color[i] > 1) fail(`${child(path, 'color')}[${i}]`, `must be between 0 and 1, linear RGB (got ${show(color[i])})`);
    }
  }
  return { translate, rotate, scale, color };
}

/** Parses one node and its subtree. `depth` is 1 for the root. */
function parseNode(value: unknown, path: string, depth: number, parentColor: Vec3): RecipeNode {
  if (depth > MAX_RECIPE_DEPTH) {
    fail(path, `is nested ${depth} levels deep; recipes may nest at most ${MAX_RECIPE_DEPTH} levels (MAX_RECIPE_DEPTH)`);
  }
  if (!isObject(value)) fail(path, `must be a node: an object with a "type" (got ${kindOf(value)})`);
  const type = own(value, 'type');
  const tp = child(path, 'type');
  if (type === undefined) fail(tp, `is missing: every node needs a "type", one of: ${RECIPE_NODE_TYPES.join(', ')}`);
  if (typeof type !== 'string') fail(tp, `must be a string naming the node type (got ${show(type)})`);
  if (!(RECIPE_NODE_TYPES as readonly string[]).includes(type)) {
    fail(tp, `${JSON.stringify(type)} is not a known node type (known types: ${RECIPE_NODE_TYPES.join(', ')})`);
  }
  const t = type as RecipeNodeType;
  const owner = `a ${t} node`;
  rejectUnknown(value, [...RECIPE_COMMON_PROPERTIES, ...RECIPE_NODE_PROPERTIES[t]], path, owner);
  const common = parseCommon(value, path, owner, parentColor);

  switch (t) {
    case 'sphere':
      return { type: t, radius: positiveNumber(value, 'radius', path, owner), ...common };
    case 'box':
      return { type: t, size: vec3(value, 'size', path, owner, true), ...common };
    case 'roundedBox': {
      const size = vec3(value, 'size', path, owner, true);
      const radius = positiveNumber(value, 'radius', path, owner);
      const limit = Math.min(size[0], size[1], size[2]) / 2;
      if (!(radius < limit)) {
        fail(
          child(path, 'radius'),
          `${fmt(radius)} is too large: the rounding radius must be less than half the smallest size (${fmt(limit)} m), ` +
            'or the rounding would eat the whole box',
        );
      }
      return { type: t, size, radius, ...common };
    }
    case 'capsule':
      return {
        type: t,
        a: vec3(value, 'a', path, owner, false),
        b: vec3(value, 'b', path, owner, false),
        radius: positiveNumber(value, 'radius', path, owner),
        ...common,
      };
    case 'cylinder':
      return {
        type: t,
        radius: positiveNumber(value, 'radius', path, owner),
        height: positiveNumber(value, 'height', path, owner),
        ...common,
      };
    case 'torus': {
      const majorRadius = positiveNumber(value, 'majorRadius', path, owner);
      const minorRadius = positiveNumber(value, 'minorRadius', path, owner);
      if (!(minorRadius < majorRadius)) {
        fail(
          child(path, 'minorRadius'),
          `(${fmt(minorRadius)}) must be smaller than majorRadius (${fmt(majorRadius)}): otherwise the tube closes the ring's hole ` +
            'and the shape is no longer a ring',
        );
      }
      return { type: t, majorRadius, minorRadius, ...common };
    }
    case 'plane':
      return {
        type: t,
        normal: direction(value, 'normal', path, owner),
        offset: finiteNumber(own(value, 'offset'), child(path, 'offset'), 'a number (metres along the normal)', owner),
        ...common,
      };
    default:
      return parseOperator(value, t, path, depth, owner, common);
  }
}

/** Parses an operator's children and checks what depends on them. */
function parseOperator(
  obj: JsonObject,
  type: 'union' | 'intersection' | 'difference' | 'smoothUnion',
  path: string,
  depth: number,
  owner: string,
  common: RecipeNodeCommon,
): RecipeNode {
  const cp = child(path, 'children');
  const raw = own(obj, 'children');
  if (raw === undefined) fail(cp, `is missing: ${owner} needs an array of at least one node`);
  if (!Array.isArray(raw)) fail(cp, `must be an array of nodes (got ${kindOf(raw)})`);
  if (raw.length === 0) fail(cp, `is empty: ${owner} needs at least one child node`);
  // The blend is checked before the children so that a bad blend on a valid tree is reported at once.
  const blend = type === 'smoothUnion' ? positiveNumber(obj, 'blend', path, owner) : 0;
  const children = raw.map((c, i) => parseNode(c, `${cp}[${i}]`, depth + 1, common.color));

  if (type !== 'smoothUnion') {
    const node: RecipeNode = { type, children, ...common };
    if (type === 'intersection' && isBoxEmpty(recipeBounds(node))) {
      fail(path, "is empty: its children's bounding boxes do not overlap, so no point is inside all of them");
    }
    return node;
  }

  // A blend wider than a part swallows it: the smooth minimum pulls the surface out by up to blend/4 and
  // rounds away any feature narrower than the blend.
  let smallest = Infinity;
  let where = '';
  children.forEach((c, i) => {
    const box = recipeBounds(c);
    for (let a = 0; a < 3; a++) {
      const half = (box[a + 3] - box[a]) / 2;
      if (Number.isFinite(half) && half < smallest) {
        smallest = half;
        where = `${cp}[${i}] (a ${c.type}) is only ${fmt(2 * half)} m across along ${'xyz'[a]}`;
      }
    }
  });
  if (blend > smallest) {
    fail(
      child(path, 'blend'),
      `${fmt(blend)} is larger than the parts it blends: ${where}. A smooth union blends over a band ${fmt(blend)} m wide ` +
        `and bulges the surface out by up to ${fmt(blend / 4)} m, which would swallow that part; use a blend of at most ` +
        `${fmt(smallest)} m (the smallest half-extent of the children's bounding boxes)`,
    );
  }
  return { type, blend, children, ...common };
}

/** JSON.parse with errors that say where: line, column and what was expected. */
function parseJson(text: string): unknown {
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  try {
    return JSON.parse(body);
  } catch (e) {
    const found = findJsonSyntaxError(body);
    if (found) throw new FieldkilnError(`recipe: invalid JSON at line ${found.line}, column ${found.column}: ${found.message}`);
    // Our scanner and the engine disagree (should not happen): fall back to the engine's position, if it gave one.
    const msg = e instanceof Error ? e.message : String(e);
    const at = /position (\d+)/.exec(msg);
    if (at) {
      const { line, column } = lineColumnAt(body, Number(at[1]));
      throw new FieldkilnError(`recipe: invalid JSON at line ${line}, column ${column}: ${msg}`);
    }
    throw new FieldkilnError(`recipe: invalid JSON: ${msg}`);
  }
}

/**
 * Parses and validates a recipe document.
 * @param text the file's contents (UTF-8 decoded; a leading byte-order mark is ignored).
 * @returns the normalized recipe: unit axes and normals, resolved colors, and `bounds` always set
 *   (the document's, or the shape's bounding box plus a margin, see `RECIPE_AUTO_BOUNDS`).
 * @throws FieldkilnError `recipe: <JSON path> <problem>` for anything the schema does not allow.
 * @example
 * const recipe = parseRecipe('{"format":"fieldkiln-recipe","version":1,"root":{"type":"sphere","radius":0.5}}');
 * recipe.bounds // [-0.6, -0.6, -0.6, 0.6, 0.6, 0.6]
 */
export function parseRecipe(text: string): Recipe {
  if (typeof text !== 'string') throw new Error('parseRecipe: text must be a string');
  const doc = parseJson(text);
  if (!isObject(doc)) fail('$', `must be a JSON object with "format": "${RECIPE_FORMAT}" (got ${kindOf(doc)})`);

  const format = own(doc, 'format');
  if (format === undefined) fail('$.format', `is missing: a recipe starts with "format": "${RECIPE_FORMAT}"`);
  if (format !== RECIPE_FORMAT) fail('$.format', `must be "${RECIPE_FORMAT}" (got ${show(format)}): this is not a Fieldkiln recipe`);
  const version = own(doc, 'version');
  if (version === undefined) fail('$.version', `is missing: this Fieldkiln reads "version": ${RECIPE_VERSION}`);
  if (version !== RECIPE_VERSION) fail('$.version', `${show(version)} is not supported: this Fieldkiln reads version ${RECIPE_VERSION} only`);
  rejectUnknown(doc, RECIPE_TOP_LEVEL_PROPERTIES, '$', 'a recipe');

  const name = own(doc, 'name');
  if (name !== undefined && typeof name !== 'string') fail('$.name', `must be a string (got ${show(name)})`);

  let bounds: Bounds | undefined;
  const b = own(doc, 'bounds');
  if (b !== undefined) {
    const problem = boundsProblem(b as number[]);
    if (problem) fail('$.bounds', `is invalid: ${problem}`);
    bounds = [...(b as Bounds)];
  }

  const rootValue = own(doc, 'root');
  if (rootValue === undefined) fail('$.root', 'is missing: a recipe needs a root node');
  const root = parseNode(rootValue, '$.root', 1, [...DEFAULT_RECIPE_COLOR]);

  if (bounds) return { name: name ?? '', bounds, boundsSource: 'explicit', root };
  const box = recipeBounds(root);
  if (!isBoxBounded(box)) {
    fail(
      '$.root',
      'is unbounded (it holds a plane that no intersection limits), so the recipe needs explicit "bounds": ' +
        '[xmin, ymin, zmin, xmax, ymax, zmax] in metres',
    );
  }
  return { name: name ?? '', bounds: autoRecipeBounds(box), boundsSource: 'auto', root };
}
