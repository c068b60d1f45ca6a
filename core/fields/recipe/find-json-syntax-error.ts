/**
 * Finds the first syntax error in a JSON text and says where it is (line and column) and what was expected.
 *
 * `JSON.parse` in Node 20 names the offending token but often not its position, so after it fails we scan
 * the text again with this small recognizer of the JSON grammar (RFC 8259, sections 2–7: values, objects,
 * arrays, numbers, strings). It builds no values. It keeps its own stack instead of recursing, so deeply
 * nested input cannot overflow the call stack.
 */

/** Where a JSON text breaks and why. */
export interface JsonSyntaxError {
  /** 0-based offset into the text (UTF-16 code units). */
  offset: number;
  /** 1-based line; lines end at `\n`. */
  line: number;
  /** 1-based column within the line (UTF-16 code units). */
  column: number;
  /** What is wrong, e.g. `expected ',' or '}' after a property value (found '"')`. */
  message: string;
}

/** 1-based line and column of `offset` in `text`. */
export function lineColumnAt(text: string, offset: number): { line: number; column: number } {
  let line = 1;
  let lineStart = 0;
  const end = Math.min(offset, text.length);
  for (let i = 0; i < end; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      lineStart = i + 1;
    }
  }
  return { line, column: offset - lineStart + 1 };
}

/** Describes the character at `i` for a message. */
function found(text: string, i: number): string {
  if (i >= text.length) return 'the end of the text';
  const c = text[i];
  if (c === '\n') return 'a line break';
  if (c === '\t') return 'a tab';
  if (c.charCodeAt(0) < 0x20) return `control character U+${c.charCodeAt(0).toString(16).padStart(4, '0')}`;
  return `'${c}'`;
}

const isDigit = (c: number): boolean => c >= 48 && c <= 57;

/**
 * Scans `text` as JSON.
 * @returns the first error, or null when the text is valid JSON.
 * @example findJsonSyntaxError('{\n  "a": 1,\n}') // { line: 3, column: 1, message: 'trailing comma ...' }
 */
export function findJsonSyntaxError(text: string): JsonSyntaxError | null {
  const n = text.length;
  let i = 0;
  const stack: number[] = []; // 123 '{' or 91 '['

  const fail = (offset: number, message: string): JsonSyntaxError => ({ offset, ...lineColumnAt(text, offset), message });

  /** An error at `at` where `what` was expected, naming comments and single quotes when those are the cause. */
  const unexpected = (at: number, what: string): JsonSyntaxError => {
    if (text[at] === '/' && (text[at + 1] === '/' || text[at + 1] === '*')) return fail(at, 'comments are not allowed in JSON');
    if (text[at] === "'") return fail(at, 'strings must use double quotes (")');
    return fail(at, `expected ${what} (found ${found(text, at)})`);
  };

  const skipSpace = (): void => {
    while (i < n) {
      const c = text.charCodeAt(i);
      if (c === 32 || c === 9 || c === 10 || c === 13) i++;
      else break;
    }
  };

  /** Scans a string starting at the quote at `i`; leaves `i` after the closing quote. */
  const scanString = (): JsonSyntaxError | null => {
    const start = i;
    i++;
    while (i < n) {
      const c = text.charCodeAt(i);
      if (c === 34) {
        i++;
        return null;
      }
      if (c < 0x20) return fail(i, `${found(text, i)} inside a string (write it as an escape such as \\n)`);
      if (c === 92) {
        const e = text[i + 1];
        if (e === 'u') {
          for (let k = i + 2; k < i + 6; k++) {
            if (!/[0-9a-fA-F]/.test(text[k] ?? '')) return fail(k, `a \\u escape needs four hex digits (found ${found(text, k)})`);
          }
          i += 6;
        } else if (e !== undefined && '"\\/bfnrt'.includes(e)) {
          i += 2;
        } else {
          return fail(i + 1, `invalid escape '\\${e ?? ''}' in a string`);
        }
        continue;
      }
      i++;
    }
    return fail(start, 'a string is never closed (missing ")');
  };

  /** Scans a number starting at `i`. */
  const scanNumber = (): JsonSyntaxError | null => {
    if (text.charCodeAt(i) === 45) i++;
    if (!isDigit(text.charCodeAt(i))) return fail(i, `expected a digit after '-' (found ${found(text, i)})`);
    if (text.charCodeAt(i) === 48) {
      i++;
      if (isDigit(text.charCodeAt(i))) return fail(i, 'numbers must not have leading zeros');
    } else {
      while (isDigit(text.charCodeAt(i))) i++;
    }
    if (text.charCodeAt(i) === 46) {
      i++;
      if (!isDigit(text.charCodeAt(i))) return fail(i, `expected a digit after the decimal point (found ${found(text, i)})`);
      while (isDigit(text.charCodeAt(i))) i++;
    }
    const e = text.charCodeAt(i);
    if (e === 101 || e === 69) {
      i++;
      const sign = text.charCodeAt(i);
      if (sign === 43 || sign === 45) i++;
      if (!isDigit(text.charCodeAt(i))) return fail(i, `expected a digit in the exponent (found ${found(text, i)})`);
      while (isDigit(text.charCodeAt(i))) i++;
    }
    return null;
  };

  /** Scans `"name" :` at `i`. */
  const scanPropertyName = (afterComma: boolean): JsonSyntaxError | null => {
    skipSpace();
    if (text[i] !== '"') {
      if (afterComma && text[i] === '}') return fail(i, "trailing comma before '}' (JSON allows no comma after the last property)");
      return unexpected(i, 'a property name in double quotes');
    }
    const err = scanString();
    if (err) return err;
    skipSpace();
    if (text[i] !== ':') return fail(i, `expected ':' after the property name (found ${found(text, i)})`);
    i++;
    return null;
  };

  for (;;) {
    // A value starts here.
    skipSpace();
    const c = text[i];
    let err: JsonSyntaxError | null = null;
    if (i >= n) return fail(i, stack.length ? 'unexpected end of the text: a value is missing' : 'the text is empty');
    if (c === '{') {
      i++;
      skipSpace();
      if (text[i] === '}') {
        i++;
      } else {
        stack.push(123);
        err = scanPropertyName(false);
        if (err) return err;
        continue;
      }
    } else if (c === '[') {
      i++;
      skipSpace();
      if (text[i] === ']') {
        i++;
      } else {
        stack.push(91);
        continue;
      }
    } else if (c === '"') {
      err = scanString();
    } else if (c === '-' || isDigit(text.charCodeAt(i))) {
      err = scanNumber();
    } else if (c === 't' || c === 'f' || c === 'n') {
      const word = c === 't' ? 'true' : c === 'f' ? 'false' : 'null';
      for (let k = 0; k < word.length; k++, i++) {
        if (text[i] !== word[k]) return fail(i, `expected '${word}' (found ${found(text, i)})`);
      }
    } else if (c === ']' && stack.length && text.slice(0, i).trimEnd().endsWith(',')) {
      return fail(i, "trailing comma before ']' (JSON allows no comma after the last element)");
    } else {
      return unexpected(i, 'a value');
    }
    if (err) return err;

    // After a value: close containers or move on to the next element.
    for (;;) {
      skipSpace();
      if (stack.length === 0) {
        if (i < n) return fail(i, `unexpected ${found(text, i)} after the end of the JSON value`);
        return null;
      }
      const top = stack[stack.length - 1];
      const close = top === 123 ? '}' : ']';
      const what = top === 123 ? 'a property value' : 'an array element';
      if (text[i] === close) {
        i++;
        stack.pop();
        continue;
      }
      if (text[i] === ',') {
        i++;
        if (top === 123) {
          err = scanPropertyName(true);
          if (err) return err;
        }
        break;
      }
      return unexpected(i, `',' or '${close}' after ${what}`);
    }
  }
}
