import { describe, expect, it } from 'vitest';
import { findJsonSyntaxError, lineColumnAt } from '../../../../core/fields/recipe/find-json-syntax-error.js';
import { seededRandom } from './recipe-test-utils.js';

describe('findJsonSyntaxError', () => {
  it('returns null for valid JSON', () => {
    for (const t of ['{}', '[]', '0', '-0.5e+3', '"a\\u00e9\\n"', ' {"a": [1, true, false, null, {"b": "c"}]} ', JSON.stringify({ x: [1.5, 'q"'] }, null, 2)]) {
      expect(findJsonSyntaxError(t), t).toBeNull();
    }
  });

  it('names the usual hand-editing mistakes, with 1-based line and column', () => {
    // Each expected line/column is counted by hand from the text beside it.
    const cases: [string, number, number, string][] = [
      ['{\n  "a": 1,\n}', 3, 1, "trailing comma before '}'"],
      ['[1, 2,]', 1, 7, "trailing comma before ']'"],
      ['{\n  // note\n  "a": 1\n}', 2, 3, 'comments are not allowed'],
      ["{'a': 1}", 1, 2, 'strings must use double quotes'],
      ['{a: 1}', 1, 2, 'expected a property name in double quotes'],
      ['[\'a\']', 1, 2, 'strings must use double quotes'],
      ['{"a": 1 "b": 2}', 1, 9, "expected ',' or '}' after a property value"],
      ['{"a" 1}', 1, 6, "expected ':' after the property name"],
      ['{"a": "unclosed}', 1, 7, 'a string is never closed'],
      ['{"a": 01}', 1, 8, 'leading zeros'],
      ['{"a": 1.}', 1, 9, 'digit after the decimal point'],
      ['{"a": tru}', 1, 10, "expected 'true'"],
      ['{"a": 1}\n}', 2, 1, 'after the end of the JSON value'],
      ['[1, 2', 1, 6, "expected ',' or ']' after an array element (found the end of the text)"],
      ['', 1, 1, 'the text is empty'],
      ['{"a": "x\ty"}', 1, 9, 'a tab inside a string'],
    ];
    for (const [text, line, column, phrase] of cases) {
      const e = findJsonSyntaxError(text);
      expect(e, text).not.toBeNull();
      expect([e!.line, e!.column], text).toEqual([line, column]);
      expect(e!.message, text).toContain(phrase);
    }
  });

  it('agrees with the JavaScript engine on seeded random corruptions of a recipe', () => {
    // Oracle: V8's JSON.parse. Validity must always agree; where V8's message gives "at position N", N must be
    // our offset too.
    const base = JSON.stringify(
      { format: 'fieldkiln-recipe', version: 1, name: 'a "q" \\ b \u00e9', root: { type: 'union', children: [{ type: 'sphere', radius: 0.5e-3, translate: [-1, 0.25, 3] }, { t: true, f: false, n: null, e: [], o: {} }] } },
      null,
      1,
    );
    const rand = seededRandom(2024);
    const alphabet = '{}[]:,"\\ 0123456789-+.eEtrufalsn\n\tx/\'uAbF';
    let withPosition = 0;
    for (let k = 0; k < 4000; k++) {
      let t = base;
      for (let e = 0; e < 1 + Math.floor(rand() * 2); e++) {
        const i = Math.floor(rand() * t.length);
        const r = rand();
        const ch = alphabet[Math.floor(rand() * alphabet.length)];
        t = r < 0.33 ? t.slice(0, i) + t.slice(i + 1) : r < 0.66 ? t.slice(0, i) + ch + t.slice(i) : t.slice(0, i) + ch + t.slice(i + 1);
      }
      let engine: string | null = null;
      try {
        JSON.parse(t);
      } catch (err) {
        engine = (err as Error).message;
      }
      const mine = findJsonSyntaxError(t);
      expect(mine === null, t).toBe(engine === null);
      const at = engine && /position (\d+)/.exec(engine);
      if (at) {
        withPosition++;
        expect(mine!.offset, `${engine}\n${t}`).toBe(Number(at[1]));
      }
    }
    expect(withPosition).toBeGreaterThan(1000);
  });

  it('handles a million open brackets without recursion', () => {
    const e = findJsonSyntaxError('['.repeat(1_000_000));
    expect(e?.offset).toBe(1_000_000);
    expect(e?.message).toContain('unexpected end of the text');
  });

  it('lineColumnAt counts lines at \\n', () => {
    expect(lineColumnAt('ab\ncd\r\nef', 0)).toEqual({ line: 1, column: 1 });
    expect(lineColumnAt('ab\ncd\r\nef', 4)).toEqual({ line: 2, column: 2 });
    expect(lineColumnAt('ab\ncd\r\nef', 7)).toEqual({ line: 3, column: 1 });
  });
});
