import { describe, expect, it } from 'vitest';
import { FieldkilnError } from '../../../../core/types.js';
import { MAX_RECIPE_DEPTH, parseRecipe } from '../../../../core/fields/recipe/parse-recipe.js';
import { RECIPE_NODE_TYPES } from '../../../../core/fields/recipe/recipe-schema.js';
import { recipeText } from './recipe-test-utils.js';

/** A valid three-part recipe; each negative test changes one thing in it. */
function good(): Record<string, unknown> & { root: Record<string, unknown> & { children: Record<string, unknown>[] } } {
  return {
    format: 'fieldkiln-recipe',
    version: 1,
    name: 'test piece',
    root: {
      type: 'union',
      children: [
        { type: 'box', size: [1, 0.2, 1] },
        { type: 'sphere', radius: 0.2, translate: [0, 0.3, 0] },
        { type: 'cylinder', radius: 0.1, height: 0.6, translate: [0.3, 0.3, 0] },
      ],
    },
  };
}

/** The error message parseRecipe throws for `doc` (fails the test if it does not throw a FieldkilnError). */
function errorOf(doc: unknown): string {
  try {
    parseRecipe(typeof doc === 'string' ? doc : JSON.stringify(doc));
  } catch (e) {
    expect(e).toBeInstanceOf(FieldkilnError);
    return (e as Error).message;
  }
  throw new Error('expected parseRecipe to throw');
}

/** `good()` with `edit` applied. */
function edited(edit: (doc: ReturnType<typeof good>) => void): ReturnType<typeof good> {
  const doc = good();
  edit(doc);
  return doc;
}

describe('parseRecipe accepts and normalizes', () => {
  it('fills defaults, resolves colors and computes auto bounds', () => {
    const r = parseRecipe(JSON.stringify(good()));
    expect(r.name).toBe('test piece');
    expect(r.boundsSource).toBe('auto');
    const box = r.root.type === 'union' ? r.root.children[0] : undefined;
    expect(box).toMatchObject({ type: 'box', size: [1, 0.2, 1], translate: [0, 0, 0], rotate: null, scale: 1, color: [0.8, 0.8, 0.8] });
  });

  it('makes rotation axes and plane normals unit length', () => {
    const r = parseRecipe(
      recipeText(
        { type: 'intersection', children: [{ type: 'plane', normal: [0, 0, -4], offset: 0 }, { type: 'sphere', radius: 1, rotate: { axis: [3, 0, 4], degrees: 10 } }] },
        { bounds: [-1, -1, -1, 1, 1, 1] },
      ),
    );
    if (r.root.type !== 'intersection') throw new Error('unexpected root');
    expect(r.root.children[0]).toMatchObject({ normal: [0, 0, -1] });
    expect(r.root.children[1].rotate).toEqual({ axis: [0.6, 0, 0.8], degrees: 10 });
    expect(r.boundsSource).toBe('explicit');
    expect(r.bounds).toEqual([-1, -1, -1, 1, 1, 1]);
  });

  it('auto bounds: shape box plus 10 % of its longest edge, at least 0.02 m', () => {
    // sphere r 0.5: box +-0.5, longest edge 1 -> margin 0.1
    expect(parseRecipe(recipeText({ type: 'sphere', radius: 0.5 })).bounds).toEqual([-0.6, -0.6, -0.6, 0.6, 0.6, 0.6]);
    // sphere r 0.05: 10 % of 0.1 is 0.01 < 0.02 -> margin 0.02
    const small = parseRecipe(recipeText({ type: 'sphere', radius: 0.05, translate: [1, 0, 0] })).bounds;
    [0.93, -0.07, -0.07, 1.07, 0.07, 0.07].forEach((v, i) => expect(small[i]).toBeCloseTo(v, 12));
  });

  it('ignores a leading byte-order mark', () => {
    expect(parseRecipe('\ufeff' + recipeText({ type: 'sphere', radius: 1 })).root.type).toBe('sphere');
  });

  it(`accepts nesting exactly ${MAX_RECIPE_DEPTH} levels deep`, () => {
    expect(MAX_RECIPE_DEPTH).toBe(64);
    let node: unknown = { type: 'sphere', radius: 0.1 };
    for (let i = 1; i < MAX_RECIPE_DEPTH; i++) node = { type: 'union', children: [node] };
    expect(parseRecipe(recipeText(node)).root.type).toBe('union');
  });
});

describe('parseRecipe rejects bad recipes, naming the JSON path', () => {
  it('reports the example from the schema exactly', () => {
    const doc = edited((d) => {
      d.root.children[2] = { type: 'sphere', radius: -0.1 };
    });
    expect(errorOf(doc)).toBe('recipe: $.root.children[2].radius must be a positive number (got -0.1)');
  });

  // [what, document, exact message start, a phrase the message must contain]
  const cases: [string, unknown, string, string | RegExp][] = [
    ['not an object', [1, 2], 'recipe: $ must be a JSON object', 'got an array'],
    ['missing format', edited((d) => delete d.format), 'recipe: $.format is missing', '"format": "fieldkiln-recipe"'],
    ['wrong format', edited((d) => (d.format = 'gltf')), 'recipe: $.format must be "fieldkiln-recipe" (got "gltf")', 'not a Fieldkiln recipe'],
    ['missing version', edited((d) => delete d.version), 'recipe: $.version is missing', 'version": 1'],
    ['wrong version', edited((d) => (d.version = 2)), 'recipe: $.version 2 is not supported', 'version 1'],
    ['version as a string', edited((d) => (d.version = '1')), 'recipe: $.version "1" is not supported', 'version 1'],
    ['unknown top-level property', edited((d) => (d.bound = [0, 0, 0, 1, 1, 1])), 'recipe: $.bound is not a property of a recipe', 'allowed: format, version, name, bounds, root'],
    ['name not a string', edited((d) => (d.name = 7)), 'recipe: $.name must be a string (got 7)', 'string'],
    ['inverted bounds', edited((d) => (d.bounds = [0, 0, 0, -1, 1, 1])), 'recipe: $.bounds is invalid: bounds xmin (0) must be below xmax (-1)', 'no volume'],
    ['zero-volume bounds', edited((d) => (d.bounds = [0, 0, 0, 1, 0, 1])), 'recipe: $.bounds is invalid: bounds ymin (0) must be below ymax (0)', 'no volume'],
    ['bounds of five numbers', edited((d) => (d.bounds = [0, 0, 0, 1, 1])), 'recipe: $.bounds is invalid: bounds must be six numbers', 'got 5'],
    ['missing root', edited((d) => delete (d as Record<string, unknown>).root), 'recipe: $.root is missing', 'root node'],
    ['node not an object', edited((d) => (d.root.children[1] = 5 as never)), 'recipe: $.root.children[1] must be a node', 'got a number'],
    ['missing type', edited((d) => delete d.root.children[0].type), 'recipe: $.root.children[0].type is missing', RECIPE_NODE_TYPES.join(', ')],
    ['type not a string', edited((d) => (d.root.children[0].type = 3)), 'recipe: $.root.children[0].type must be a string', 'got 3'],
    [
      'unknown type',
      edited((d) => (d.root.children[1].type = 'spehre')),
      'recipe: $.root.children[1].type "spehre" is not a known node type',
      'known types: sphere, box, roundedBox, capsule, cylinder, torus, plane, union, intersection, difference, smoothUnion',
    ],
    ['missing parameter', edited((d) => delete d.root.children[1].radius), 'recipe: $.root.children[1].radius is missing', 'a sphere node needs it'],
    ['non-numeric parameter', edited((d) => (d.root.children[1].radius = '0.2')), 'recipe: $.root.children[1].radius must be a positive number (got "0.2")', 'got "0.2"'],
    ['non-finite parameter', '{"format":"fieldkiln-recipe","version":1,"root":{"type":"sphere","radius":1e999}}', 'recipe: $.root.radius must be a finite number (got Infinity)', 'Infinity'],
    ['zero size', edited((d) => (d.root.children[0].size = [1, 0, 1])), 'recipe: $.root.children[0].size[1] must be a positive number (got 0)', 'got 0'],
    ['negative size', edited((d) => (d.root.children[0].size = [1, 0.2, -1])), 'recipe: $.root.children[0].size[2] must be a positive number (got -1)', 'got -1'],
    ['size of two numbers', edited((d) => (d.root.children[0].size = [1, 1])), 'recipe: $.root.children[0].size must be an array of 3 positive numbers', 'got [1,1]'],
    ['zero height', edited((d) => (d.root.children[2].height = 0)), 'recipe: $.root.children[2].height must be a positive number (got 0)', 'got 0'],
    [
      'minor radius not below major',
      edited((d) => (d.root.children[2] = { type: 'torus', majorRadius: 0.2, minorRadius: 0.2 })),
      'recipe: $.root.children[2].minorRadius (0.2) must be smaller than majorRadius (0.2)',
      'hole',
    ],
    [
      'rounding radius too large',
      edited((d) => (d.root.children[0] = { type: 'roundedBox', size: [1, 0.2, 1], radius: 0.1 })),
      'recipe: $.root.children[0].radius 0.1 is too large',
      'less than half the smallest size (0.1 m)',
    ],
    ['capsule end not numbers', edited((d) => (d.root.children[2] = { type: 'capsule', a: [0, 0, 0], b: [0, 'up', 0], radius: 0.1 })), 'recipe: $.root.children[2].b[1] must be a number (got "up")', 'up'],
    ['translate with null', edited((d) => (d.root.children[1].translate = [0, null, 0])), 'recipe: $.root.children[1].translate[1] must be a number (got null)', 'null'],
    ['zero rotation axis', edited((d) => (d.root.children[0].rotate = { axis: [0, 0, 0], degrees: 30 })), 'recipe: $.root.children[0].rotate.axis must not be the zero vector', 'point'],
    ['rotation without degrees', edited((d) => (d.root.children[0].rotate = { axis: [0, 1, 0] })), 'recipe: $.root.children[0].rotate.degrees is missing', 'a rotation needs it'],
    ['rotation with a typo', edited((d) => (d.root.children[0].rotate = { axis: [0, 1, 0], degree: 30 })), 'recipe: $.root.children[0].rotate.degree is not a property of a rotation', 'allowed: axis, degrees'],
    ['rotation as an array', edited((d) => (d.root.children[0].rotate = [0, 1, 0, 30])), 'recipe: $.root.children[0].rotate must be an object', 'axis'],
    [
      'non-uniform scale',
      edited((d) => (d.root.children[1].scale = [1, 2, 1])),
      'recipe: $.root.children[1].scale must be a single positive number (got [1,2,1])',
      /uniform scale.*distance property/,
    ],
    ['zero scale', edited((d) => (d.root.children[1].scale = 0)), 'recipe: $.root.children[1].scale must be a positive number (got 0)', 'got 0'],
    ['color out of range', edited((d) => (d.root.children[1].color = [1.2, 0, 0])), 'recipe: $.root.children[1].color[0] must be between 0 and 1', 'linear RGB'],
    ['empty children', edited((d) => (d.root.children = [])), 'recipe: $.root.children is empty', 'at least one child'],
    ['children not an array', edited((d) => ((d.root as Record<string, unknown>).children = { type: 'sphere', radius: 1 })), 'recipe: $.root.children must be an array of nodes', 'got an object'],
    ['misspelled property', edited((d) => (d.root.children[1] = { type: 'sphere', radus: 0.2 })), 'recipe: $.root.children[1].radus is not a property of a sphere node', 'allowed: type, translate, rotate, scale, color, radius'],
    ['property of another type', edited((d) => (d.root.children[0].radius = 0.1)), 'recipe: $.root.children[0].radius is not a property of a box node', 'size'],
    ['__proto__ is not followed', '{"format":"fieldkiln-recipe","version":1,"root":{"type":"sphere","radius":1,"__proto__":{"radius":2}}}', 'recipe: $.root.__proto__ is not a property of a sphere node', 'spelling'],
    ['odd key names are quoted', edited((d) => (d.root.children[1]['my radius'] = 1)), 'recipe: $.root.children[1]["my radius"] is not a property', 'sphere'],
    ['smoothUnion without blend', edited((d) => ((d.root as Record<string, unknown>).type = 'smoothUnion')), 'recipe: $.root.blend is missing', 'a smoothUnion node needs it'],
    ['plane normal zero', recipeText({ type: 'plane', normal: [0, 0, 0], offset: 0 }, { bounds: [0, 0, 0, 1, 1, 1] }), 'recipe: $.root.normal must not be the zero vector', 'point'],
    ['plane without offset', recipeText({ type: 'plane', normal: [0, 1, 0] }, { bounds: [0, 0, 0, 1, 1, 1] }), 'recipe: $.root.offset is missing', 'metres'],
    [
      'unbounded root without bounds',
      recipeText({ type: 'union', children: [{ type: 'sphere', radius: 1 }, { type: 'plane', normal: [0, 1, 0], offset: 0 }] }),
      'recipe: $.root is unbounded',
      'explicit "bounds"',
    ],
    [
      'empty intersection',
      recipeText({ type: 'intersection', children: [{ type: 'sphere', radius: 0.5 }, { type: 'sphere', radius: 0.5, translate: [2, 0, 0] }] }),
      'recipe: $.root is empty',
      'do not overlap',
    ],
  ];

  for (const [what, doc, start, phrase] of cases) {
    it(what, () => {
      const msg = errorOf(doc);
      expect(msg.startsWith(start), `message: ${msg}`).toBe(true);
      if (typeof phrase === 'string') expect(msg).toContain(phrase);
      else expect(msg).toMatch(phrase);
    });
  }

  it('smoothUnion blend larger than the smallest part: path, part and limit in the message', () => {
    const doc = edited((d) => {
      d.root.children[2] = {
        type: 'smoothUnion',
        blend: 0.15,
        children: [
          { type: 'sphere', radius: 0.3 },
          { type: 'cylinder', radius: 0.05, height: 0.5 }, // 0.1 m across: half-extent 0.05 < 0.15
        ],
      };
    });
    const msg = errorOf(doc);
    expect(msg.startsWith('recipe: $.root.children[2].blend 0.15 is larger than the parts it blends')).toBe(true);
    expect(msg).toContain('$.root.children[2].children[1] (a cylinder) is only 0.1 m across along x');
    expect(msg).toContain('use a blend of at most 0.05 m');
    // at the limit it is accepted
    (doc.root.children[2] as { blend: number }).blend = 0.05;
    expect(parseRecipe(JSON.stringify(doc)).root.type).toBe('union');
  });

  it(`rejects nesting deeper than MAX_RECIPE_DEPTH (${MAX_RECIPE_DEPTH}) at the first node too deep`, () => {
    let node: unknown = { type: 'sphere', radius: 0.1 };
    for (let i = 1; i <= MAX_RECIPE_DEPTH; i++) node = { type: 'union', children: [node] };
    const msg = errorOf(recipeText(node));
    const path = '$.root' + '.children[0]'.repeat(MAX_RECIPE_DEPTH);
    expect(msg).toBe(`recipe: ${path} is nested 65 levels deep; recipes may nest at most 64 levels (MAX_RECIPE_DEPTH)`);
  });

  it('rejects absurd nesting quickly, without overflowing the stack', () => {
    const depth = 100_000;
    const text = '{"format":"fieldkiln-recipe","version":1,"root":' + '{"type":"union","children":['.repeat(depth) + '{"type":"sphere","radius":1}' + ']}'.repeat(depth) + '}';
    const t0 = performance.now();
    expect(errorOf(text)).toMatch(/is nested 65 levels deep/);
    expect(performance.now() - t0).toBeLessThan(5000);
  });

  it('reports JSON syntax errors with line and column', () => {
    const text = '{\n  "format": "fieldkiln-recipe",\n  "version": 1,\n  "root": { "type": "sphere" "radius": 1 }\n}';
    // line 4 is `  "root": { "type": "sphere" "radius": 1 }`; the quote of "radius" is at column 30 (2 spaces + 27 characters before it)
    expect(errorOf(text)).toBe("recipe: invalid JSON at line 4, column 30: expected ',' or '}' after a property value (found '\"')");
    expect(errorOf('')).toBe('recipe: invalid JSON at line 1, column 1: the text is empty');
  });

  it('never evaluates recipe text as script', () => {
    const g = globalThis as Record<string, unknown>;
    delete g.recipeRan;
    const msg = errorOf('{"format":"fieldkiln-recipe","version":1,"root":(globalThis.recipeRan=1)}');
    expect(msg).toMatch(/^recipe: invalid JSON at line 1, column 49/);
    expect(g.recipeRan).toBeUndefined();
  });
});
