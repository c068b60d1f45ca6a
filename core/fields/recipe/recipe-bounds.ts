/**
 * Axis-aligned bounding boxes of recipe nodes, used to size automatic bounds, to check smooth-union
 * blend radii against the parts they blend, and to catch empty intersections.
 *
 * A box always contains the node's solid (it may be larger, never smaller):
 * - sphere, capsule, cylinder and torus boxes are exact under any rotation: a disc of radius r with unit
 *   normal u reaches r·sqrt(1 − u_i²) along axis i;
 * - box and roundedBox use the rotated box's extents |M|·half (exact for box, the corners' rounding ignored);
 * - plane: unbounded (all components infinite), unless an intersection limits it.
 *
 * Operators are bounded through the region where the field is below a level c, not through distances,
 * because union, intersection and difference give distance *bounds* (an intersection's value may be less
 * than the true distance), so "value < c" need not mean "within c of the solid". The sets themselves
 * compose exactly: {min(a,b) < c} = {a < c} ∪ {b < c}; {max(a,b) < c} = {a < c} ∩ {b < c};
 * {max(a,−b) < c} ⊂ {a < c}; and the polynomial smooth minimum is never below min(a,b) − k/4
 * (at a = b), so {smin(a,b,k) < c} ⊂ {min(a,b) < c + k/4}; folding n children loses at most (n − 1)·k/4
 * (three equal values fold to a − 0.39k, so one k/4 is not enough). For an exact primitive SDF,
 * {d < c} is the solid grown by c, whose box is the solid's box grown by c on every side.
 * A node scaled by s has value s·d(local), so level c becomes c/s inside it. An operator's box is mapped to
 * the parent frame by its center and |M|·half-extents (a superset when the node is rotated).
 */
import type { Bounds } from '../../types.js';
import { RECIPE_AUTO_BOUNDS, isRecipeOperator, type RecipeNode } from './recipe-schema.js';
import { nodeTransform, type Affine } from './node-transform.js';

/**
 * `[xmin, ymin, zmin, xmax, ymax, zmax]` in metres, where unbounded sides are ±Infinity and an empty box
 * has some min > max.
 */
export type ShapeBox = [number, number, number, number, number, number];

const UNBOUNDED: Readonly<ShapeBox> = [-Infinity, -Infinity, -Infinity, Infinity, Infinity, Infinity];

/** True when every side of the box is finite. */
export function isBoxBounded(box: Readonly<ShapeBox>): boolean {
  return box.every(Number.isFinite);
}

/** True when the box holds no volume (some min ≥ max). */
export function isBoxEmpty(box: Readonly<ShapeBox>): boolean {
  return !(box[0] < box[3] && box[1] < box[4] && box[2] < box[5]);
}

/** Maps a box through `y = M x + t`: the result holds the image of the box. Unbounded stays unbounded. */
export function transformBox(box: Readonly<ShapeBox>, m: Affine): ShapeBox {
  if (isBoxEmpty(box)) return [...box];
  if (!isBoxBounded(box)) return [...UNBOUNDED];
  const out: ShapeBox = [0, 0, 0, 0, 0, 0];
  const c = [(box[0] + box[3]) / 2, (box[1] + box[4]) / 2, (box[2] + box[5]) / 2];
  const h = [(box[3] - box[0]) / 2, (box[4] - box[1]) / 2, (box[5] - box[2]) / 2];
  for (let r = 0; r < 3; r++) {
    const center = m[r * 3] * c[0] + m[r * 3 + 1] * c[1] + m[r * 3 + 2] * c[2] + m[9 + r];
    const half = Math.abs(m[r * 3]) * h[0] + Math.abs(m[r * 3 + 1]) * h[1] + Math.abs(m[r * 3 + 2]) * h[2];
    out[r] = center - half;
    out[r + 3] = center + half;
  }
  return out;
}

/** Extent of a disc of `radius` with unit normal `u` along axis `i`. */
function discExtent(radius: number, u: readonly number[], i: number): number {
  return radius * Math.sqrt(Math.max(0, 1 - u[i] * u[i]));
}

/** Box of a primitive's solid in its parent's frame, given its local-to-parent map `m` (scale folded in). */
function primitiveBox(node: RecipeNode, m: Affine, s: number): ShapeBox {
  const t = [m[9], m[10], m[11]];
  // Image of the local +Y axis, unit length.
  const up = [m[1] / s, m[4] / s, m[7] / s];
  const out: ShapeBox = [0, 0, 0, 0, 0, 0];
  switch (node.type) {
    case 'sphere':
      for (let i = 0; i < 3; i++) {
        out[i] = t[i] - s * node.radius;
        out[i + 3] = t[i] + s * node.radius;
      }
      return out;
    case 'box':
    case 'roundedBox':
      return transformBox([-node.size[0] / 2, -node.size[1] / 2, -node.size[2] / 2, node.size[0] / 2, node.size[1] / 2, node.size[2] / 2], m);
    case 'capsule': {
      const ends = [node.a, node.b].map((p) => [0, 1, 2].map((r) => m[r * 3] * p[0] + m[r * 3 + 1] * p[1] + m[r * 3 + 2] * p[2] + t[r]));
      for (let i = 0; i < 3; i++) {
        out[i] = Math.min(ends[0][i], ends[1][i]) - s * node.radius;
        out[i + 3] = Math.max(ends[0][i], ends[1][i]) + s * node.radius;
      }
      return out;
    }
    case 'cylinder':
      for (let i = 0; i < 3; i++) {
        const axial = Math.abs(up[i]) * s * (node.height / 2);
        const radial = discExtent(s * node.radius, up, i);
        out[i] = t[i] - axial - radial;
        out[i + 3] = t[i] + axial + radial;
      }
      return out;
    case 'torus':
      for (let i = 0; i < 3; i++) {
        const e = discExtent(s * node.majorRadius, up, i) + s * node.minorRadius;
        out[i] = t[i] - e;
        out[i + 3] = t[i] + e;
      }
      return out;
    case 'plane':
      return [...UNBOUNDED];
    default:
      throw new Error(`recipeBounds: not a primitive: ${node.type}`);
  }
}

/**
 * The box holding the points where a node's value is below `level` (its solid when `level` is 0), in its
 * parent's frame: the node's own transform is applied.
 * @param node a normalized node from `parseRecipe`.
 * @param level metres, ≥ 0, in the parent's frame. Default 0.
 * @returns metres; ±Infinity sides when the region is unbounded; some min > max when it is empty.
 * @example recipeBounds(root) // [-0.5, -0.5, -0.5, 0.5, 0.5, 0.5] for a sphere of radius 0.5
 */
export function recipeBounds(node: RecipeNode, level = 0): ShapeBox {
  const m = nodeTransform(node);
  if (!isRecipeOperator(node)) {
    const box = primitiveBox(node, m, node.scale);
    for (let i = 0; i < 3; i++) {
      box[i] -= level;
      box[i + 3] += level;
    }
    return box;
  }
  const localLevel = level / node.scale + (node.type === 'smoothUnion' ? ((node.children.length - 1) * node.blend) / 4 : 0);
  const boxes = node.children.map((child) => recipeBounds(child, localLevel));
  let local: ShapeBox;
  if (node.type === 'difference') {
    local = boxes[0];
  } else if (node.type === 'intersection') {
    local = [...boxes[0]];
    for (const b of boxes.slice(1)) {
      for (let i = 0; i < 3; i++) {
        local[i] = Math.max(local[i], b[i]);
        local[i + 3] = Math.min(local[i + 3], b[i + 3]);
      }
    }
  } else {
    local = [...boxes[0]];
    for (const b of boxes.slice(1)) {
      for (let i = 0; i < 3; i++) {
        local[i] = Math.min(local[i], b[i]);
        local[i + 3] = Math.max(local[i + 3], b[i + 3]);
      }
    }
  }
  return transformBox(local, m);
}

/**
 * Grows a finite, non-empty shape box into field bounds: every side moves out by
 * max({@link RECIPE_AUTO_BOUNDS}.fraction × the longest edge, RECIPE_AUTO_BOUNDS.minMetres).
 * @example autoRecipeBounds([-0.5, -0.5, -0.5, 0.5, 0.5, 0.5]) // ±0.6
 */
export function autoRecipeBounds(box: Readonly<ShapeBox>): Bounds {
  if (!isBoxBounded(box) || isBoxEmpty(box)) throw new Error('autoRecipeBounds: the box must be finite and non-empty');
  const longest = Math.max(box[3] - box[0], box[4] - box[1], box[5] - box[2]);
  const margin = Math.max(RECIPE_AUTO_BOUNDS.fraction * longest, RECIPE_AUTO_BOUNDS.minMetres);
  return [box[0] - margin, box[1] - margin, box[2] - margin, box[3] + margin, box[4] + margin, box[5] + margin];
}
