/**
 * Reading a field runs no code from it: ONNX models run through onnxruntime with no custom-operator
 * libraries, and recipes are data, never evaluated as script.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { ONNX_SESSION_OPTIONS } from '../../../app/fields/open-field.js';
import { createRecipeField } from '../../../core/fields/recipe/recipe-field.js';
import { REPO_ROOT } from '../../helpers/fixtures.js';

function sources(dir: string): string[] {
  return readdirSync(dir).flatMap((n) => {
    const p = join(dir, n);
    return statSync(p).isDirectory() ? sources(p) : p.endsWith('.ts') ? [p] : [];
  });
}

describe('fields are data', () => {
  test('the ONNX session options name no custom-operator library and no extra execution provider', () => {
    expect(Object.keys(ONNX_SESSION_OPTIONS).sort()).toEqual(['executionMode', 'graphOptimizationLevel', 'interOpNumThreads', 'intraOpNumThreads', 'logSeverityLevel']);
  });

  test('no eval, Function constructor or dynamic import of user paths in the field readers and core', () => {
    for (const file of [...sources(join(REPO_ROOT, 'core')), ...sources(join(REPO_ROOT, 'app', 'fields'))]) {
      const text = readFileSync(file, 'utf8');
      expect(text, file).not.toMatch(/\beval\s*\(|new\s+Function\s*\(|\bimport\s*\(\s*[a-zA-Z_]/);
    }
  });

  test('script in a recipe is rejected as data, never run', () => {
    const marker = '__fieldkiln_ran__';
    const attempts: unknown[] = [
      { format: 'fieldkiln-recipe', version: 1, root: { type: 'sphere', radius: `globalThis.${marker} = 1` } },
      { format: 'fieldkiln-recipe', version: 1, root: { type: 'sphere', radius: 0.2, constructor: { prototype: { polluted: true } } } },
      { format: 'fieldkiln-recipe', version: 1, root: { type: 'toString', radius: 0.2 } },
    ];
    for (const a of attempts) expect(() => createRecipeField(JSON.stringify(a), 'evil.json')).toThrow(/^recipe: \$\.root/);
    expect(() => createRecipeField('{"format":"fieldkiln-recipe","version":1,"root":{"type":"sphere","radius":0.2,"__proto__":{"polluted":true}}}', 'evil.json')).toThrow(/__proto__/);
    expect((globalThis as Record<string, unknown>)[marker]).toBeUndefined();
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
  });
});
