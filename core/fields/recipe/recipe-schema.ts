/**
 * The Fieldkiln recipe schema: a plain JSON description of a procedural signed distance field
 * (metres, negative inside, +Y up). This file holds only types and constants; `parseRecipe`
 * validates a document against them and `compileRecipe` evaluates the result.
 *
 * Two families of types live here:
 * - `Recipe*Json`: what an author writes (optional properties are optional).
 * - `Recipe`, `RecipeNode`: the normalized tree `parseRecipe` returns. Every property is present,
 *   axes and normals are unit length, colors are resolved (inherited or defaulted), and `bounds` is set.
 *
 * Example document:
 * ```json
 * { "format": "fieldkiln-recipe", "version": 1, "name": "ball on a slab",
 *   "root": { "type": "smoothUnion", "blend": 0.03, "children": [
 *     { "type": "box", "size": [0.6, 0.1, 0.6], "color": [0.4, 0.4, 0.4] },
 *     { "type": "sphere", "radius": 0.2, "translate": [0, 0.2, 0], "color": [0.8, 0.3, 0.1] } ] } }
 * ```
 */
import type { Bounds } from '../../types.js';

/** Three numbers: a point, a direction or a size (x, y, z), or linear RGB. */
export type Vec3 = [number, number, number];

/** The value the top-level `format` property must have. */
export const RECIPE_FORMAT = 'fieldkiln-recipe';

/** The only schema version this Fieldkiln reads. */
export const RECIPE_VERSION = 1;

/**
 * Deepest nesting of nodes a recipe may have: the root is level 1, its children level 2, and so on.
 * Evaluation recurses once per level, so the limit keeps a hostile file from exhausting the stack.
 */
export const MAX_RECIPE_DEPTH = 64;

/** Color of a node that has none and whose ancestors have none: linear RGB. */
export const DEFAULT_RECIPE_COLOR: Readonly<Vec3> = [0.8, 0.8, 0.8];

/**
 * Automatic bounds, used when a recipe has no `bounds`: the shape's bounding box grown on every side by
 * `fraction` × its longest edge, but by at least `minMetres`.
 */
export const RECIPE_AUTO_BOUNDS = { fraction: 0.1, minMetres: 0.02 } as const;

/** Leaf node types; each is centred at its local origin, Y up. */
export const RECIPE_PRIMITIVE_TYPES = ['sphere', 'box', 'roundedBox', 'capsule', 'cylinder', 'torus', 'plane'] as const;

/** Inner node types; each combines its `children`. */
export const RECIPE_OPERATOR_TYPES = ['union', 'intersection', 'difference', 'smoothUnion'] as const;

/** Every node type, primitives first. */
export const RECIPE_NODE_TYPES = [...RECIPE_PRIMITIVE_TYPES, ...RECIPE_OPERATOR_TYPES] as const;

export type RecipePrimitiveType = (typeof RECIPE_PRIMITIVE_TYPES)[number];
export type RecipeOperatorType = (typeof RECIPE_OPERATOR_TYPES)[number];
export type RecipeNodeType = (typeof RECIPE_NODE_TYPES)[number];

/** Properties every node may have. */
export const RECIPE_COMMON_PROPERTIES = ['type', 'translate', 'rotate', 'scale', 'color'] as const;

/** Properties of the top-level object. */
export const RECIPE_TOP_LEVEL_PROPERTIES = ['format', 'version', 'name', 'bounds', 'root'] as const;

/** The type-specific properties of each node type, all required. */
export const RECIPE_NODE_PROPERTIES: Readonly<Record<RecipeNodeType, readonly string[]>> = {
  sphere: ['radius'],
  box: ['size'],
  roundedBox: ['size', 'radius'],
  capsule: ['a', 'b', 'radius'],
  cylinder: ['radius', 'height'],
  torus: ['majorRadius', 'minorRadius'],
  plane: ['normal', 'offset'],
  union: ['children'],
  intersection: ['children'],
  difference: ['children'],
  smoothUnion: ['children', 'blend'],
};

// ---------------------------------------------------------------------------------------------
// What an author writes.

/** A rotation of `degrees` about `axis` (any non-zero length), right-handed. */
export interface RecipeRotationJson {
  axis: Vec3;
  degrees: number;
}

/** Properties every node may carry. The transform applies scale first, then rotate, then translate. */
export interface RecipeNodeCommonJson {
  /** Metres, in the parent's frame. Default [0, 0, 0]. */
  translate?: Vec3;
  /** Default: no rotation. */
  rotate?: RecipeRotationJson;
  /** Uniform scale factor, > 0. Default 1. Per-axis scale is not allowed: it would break the distance property. */
  scale?: number;
  /** Linear RGB in 0..1. Default: the parent's color, else {@link DEFAULT_RECIPE_COLOR}. */
  color?: Vec3;
}

export type RecipeNodeJson = RecipeNodeCommonJson &
  (
    | { type: 'sphere'; radius: number }
    | { type: 'box'; size: Vec3 }
    | { type: 'roundedBox'; size: Vec3; radius: number }
    | { type: 'capsule'; a: Vec3; b: Vec3; radius: number }
    | { type: 'cylinder'; radius: number; height: number }
    | { type: 'torus'; majorRadius: number; minorRadius: number }
    | { type: 'plane'; normal: Vec3; offset: number }
    | { type: 'union' | 'intersection' | 'difference'; children: RecipeNodeJson[] }
    | { type: 'smoothUnion'; blend: number; children: RecipeNodeJson[] }
  );

/** A recipe file's top-level object. */
export interface RecipeJson {
  format: typeof RECIPE_FORMAT;
  version: typeof RECIPE_VERSION;
  name?: string;
  /** `[xmin, ymin, zmin, xmax, ymax, zmax]` in metres. Required when the shape is unbounded (a plane not cut by an intersection). */
  bounds?: Bounds;
  root: RecipeNodeJson;
}

// ---------------------------------------------------------------------------------------------
// The normalized tree `parseRecipe` returns.

/** A rotation about a unit `axis`, right-handed, in degrees. */
export interface RecipeRotation {
  axis: Vec3;
  degrees: number;
}

/** What every normalized node has. */
export interface RecipeNodeCommon {
  /** Metres, in the parent's frame. */
  translate: Vec3;
  /** Null when the node is not rotated. */
  rotate: RecipeRotation | null;
  /** Uniform scale, > 0. */
  scale: number;
  /** Resolved linear RGB: the node's own, else inherited, else the default. */
  color: Vec3;
}

/** Sphere of `radius` metres around the local origin. */
export interface RecipeSphere extends RecipeNodeCommon {
  type: 'sphere';
  radius: number;
}
/** Box of full edge lengths `size` (metres), centred at the local origin. */
export interface RecipeBox extends RecipeNodeCommon {
  type: 'box';
  size: Vec3;
}
/** Box of full edge lengths `size` with its edges rounded by `radius` (< half the smallest size). */
export interface RecipeRoundedBox extends RecipeNodeCommon {
  type: 'roundedBox';
  size: Vec3;
  radius: number;
}
/** All points within `radius` of the segment from `a` to `b`. */
export interface RecipeCapsule extends RecipeNodeCommon {
  type: 'capsule';
  a: Vec3;
  b: Vec3;
  radius: number;
}
/** Capped cylinder around the local Y axis, `height` is the full height. */
export interface RecipeCylinder extends RecipeNodeCommon {
  type: 'cylinder';
  radius: number;
  height: number;
}
/** Ring in the local XZ plane: tube of `minorRadius` around a circle of `majorRadius` (minor < major). */
export interface RecipeTorus extends RecipeNodeCommon {
  type: 'torus';
  majorRadius: number;
  minorRadius: number;
}
/** Half-space dot(normal, p) < offset; `normal` is unit length. Unbounded. */
export interface RecipePlane extends RecipeNodeCommon {
  type: 'plane';
  normal: Vec3;
  offset: number;
}
/** `union`: min of the children; `intersection`: max; `difference`: the first child minus all others. */
export interface RecipeBooleanOperator extends RecipeNodeCommon {
  type: 'union' | 'intersection' | 'difference';
  children: RecipeNode[];
}
/** Polynomial smooth minimum of the children, blend radius `blend` metres (in this node's frame). */
export interface RecipeSmoothUnion extends RecipeNodeCommon {
  type: 'smoothUnion';
  blend: number;
  children: RecipeNode[];
}

export type RecipePrimitive =
  | RecipeSphere
  | RecipeBox
  | RecipeRoundedBox
  | RecipeCapsule
  | RecipeCylinder
  | RecipeTorus
  | RecipePlane;
export type RecipeOperator = RecipeBooleanOperator | RecipeSmoothUnion;
export type RecipeNode = RecipePrimitive | RecipeOperator;

/** A validated, normalized recipe. */
export interface Recipe {
  /** The document's `name`, or '' when it has none. */
  name: string;
  /** Where the field is defined, metres: the document's `bounds`, or computed from the shape. */
  bounds: Bounds;
  /** Whether `bounds` came from the document or was computed ({@link RECIPE_AUTO_BOUNDS}). */
  boundsSource: 'explicit' | 'auto';
  root: RecipeNode;
}

/** True for node types that have `children`. */
export function isRecipeOperator(node: RecipeNode): node is RecipeOperator {
  return 'children' in node;
}
