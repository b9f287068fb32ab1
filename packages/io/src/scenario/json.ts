/**
 * A strict JSON parser (RFC 8259) that reports where a document goes wrong by line and column,
 * and refuses duplicate keys (JSON.parse silently keeps the last one, which hides typos in
 * scenario files). Nesting is limited so hostile input cannot exhaust the stack.
 */

/**
 * A JSON syntax problem with its 1-based line and column.
 * @example
 * let problem: unknown;
 * try { parseJson('{"a": 1,\n}'); } catch (e) { problem = e; }
 * problem instanceof JsonSyntaxError && [problem.line, problem.column, problem.message] // [2, 1, "expected a key in double quotes but found '}' at line 2, column 1"]
 */
export class JsonSyntaxError extends Error {
  constructor(
    message: string,
    readonly line: number,
    readonly column: number,
  ) {
    super(`${message} at line ${line}, column ${column}`);
    this.name = 'JsonSyntaxError';
  }
}

/**
 * Deepest nesting of arrays and objects accepted.
 * @example parseJson('['.repeat(MAX_JSON_DEPTH + 1) + ']'.repeat(MAX_JSON_DEPTH + 1)) // throws JsonSyntaxError "nesting deeper than 64 levels at line 1, column 65"
 */
export const MAX_JSON_DEPTH = 64;

/**
 * Parse JSON text; throws JsonSyntaxError with line and column.
 * @example parseJson('{"a": [1, 2]}') // { a: [1, 2] }
 */
export function parseJson(text: string): unknown {
  let i = 0;
  const n = text.length;

  const fail = (message: string, at = i): never => {
    let line = 1;
    let column = 1;
    for (let p = 0; p < at && p < n; p++) {
      if (text.charCodeAt(p) === 10) {
        line++;
        column = 1;
      } else column++;
    }
    throw new JsonSyntaxError(message, line, column);
  };
  const describe = (): string => (i >= n ? 'end of input' : `'${text[i]}'`);
  const skip = (): void => {
    while (i < n) {
      const c = text.charCodeAt(i);
      if (c === 32 || c === 9 || c === 10 || c === 13) i++;
      else break;
    }
  };

  const parseString = (): string => {
    const start = i;
    i++; // opening quote
    let out = '';
    let run = i;
    while (true) {
      if (i >= n) fail('unterminated string', start);
      const c = text.charCodeAt(i);
      if (c === 34) {
        out += text.slice(run, i);
        i++;
        return out;
      }
      if (c < 32) fail('control character in string');
      if (c === 92) {
        out += text.slice(run, i);
        const e = text[i + 1];
        const simple: Record<string, string> = { '"': '"', '\\': '\\', '/': '/', b: '\b', f: '\f', n: '\n', r: '\r', t: '\t' };
        if (e !== undefined && e in simple) {
          out += simple[e];
          i += 2;
        } else if (e === 'u') {
          const hex = text.slice(i + 2, i + 6);
          if (!/^[0-9a-fA-F]{4}$/.test(hex)) fail('bad \\u escape');
          out += String.fromCharCode(parseInt(hex, 16));
          i += 6;
        } else fail('bad escape in string', i + 1);
        run = i;
      } else i++;
    }
  };

  const parseNumber = (): number => {
    const m = /^-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][+-]?\d+)?/.exec(text.slice(i, i + 400));
    if (m === null) return fail(`unexpected ${describe()}`);
    i += m[0].length;
    return Number(m[0]);
  };

  const parseValue = (depth: number): unknown => {
    skip();
    if (i >= n) fail('unexpected end of input');
    const c = text[i];
    if (c === '{' || c === '[') {
      if (depth >= MAX_JSON_DEPTH) fail(`nesting deeper than ${MAX_JSON_DEPTH} levels`);
      return c === '{' ? parseObject(depth + 1) : parseArray(depth + 1);
    }
    if (c === '"') return parseString();
    if (c === '-' || (c! >= '0' && c! <= '9')) return parseNumber();
    for (const [word, value] of [
      ['true', true],
      ['false', false],
      ['null', null],
    ] as const) {
      if (text.startsWith(word, i)) {
        i += word.length;
        return value;
      }
    }
    if (/^(NaN|-?Infinity)/.test(text.slice(i, i + 9))) fail('NaN and Infinity are not JSON numbers');
    return fail(`unexpected ${describe()}`);
  };

  const parseArray = (depth: number): unknown[] => {
    i++;
    const out: unknown[] = [];
    skip();
    if (text[i] === ']') {
      i++;
      return out;
    }
    while (true) {
      out.push(parseValue(depth));
      skip();
      if (text[i] === ',') i++;
      else if (text[i] === ']') {
        i++;
        return out;
      } else fail(`expected ',' or ']' but found ${describe()}`);
    }
  };

  const parseObject = (depth: number): Record<string, unknown> => {
    i++;
    const out: Record<string, unknown> = Object.create(null) as Record<string, unknown>;
    skip();
    if (text[i] === '}') {
      i++;
      return { ...out };
    }
    while (true) {
      skip();
      if (text[i] !== '"') fail(`expected a key in double quotes but found ${describe()}`);
      const keyAt = i;
      const key = parseString();
      if (Object.prototype.hasOwnProperty.call(out, key)) fail(`duplicate key "${key}"`, keyAt);
      skip();
      if (text[i] !== ':') fail(`expected ':' after key "${key}" but found ${describe()}`);
      i++;
      out[key] = parseValue(depth);
      skip();
      if (text[i] === ',') i++;
      else if (text[i] === '}') {
        i++;
        // a plain object, so callers get ordinary prototypes; "__proto__" stays a data key
        return Object.fromEntries(Object.entries(out));
      } else fail(`expected ',' or '}' but found ${describe()}`);
    }
  };

  if (text.charCodeAt(0) === 0xfeff) i = 1; // byte-order mark
  const value = parseValue(0);
  skip();
  if (i < n) fail(`unexpected ${describe()} after the document`);
  return value;
}
