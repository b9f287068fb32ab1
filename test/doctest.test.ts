/**
 * Doctest: every `@example` in the packages' sources that states a result is run, and the value
 * is compared with the result written (in the spirit of the stdlib project's doc lint).
 *
 * Result syntax: a line `expr // RESULT`, or `const x = expr; // RESULT` (then x is compared),
 * where RESULT starts with a JavaScript literal (number, string, true/false/null, or an array or
 * object of literals), then the comment's end or prose after `:` or ` (`: `// 62: moved below`,
 * `// 0.98 (two digits)`. `// 22 m along x` states no result. Numbers are compared to the digits written: 0.9879 holds for any value that
 * rounds to it (|value - written| <= half a unit of the last digit written); integers written
 * without a point or exponent must match exactly. A comment that does not start with a literal
 * ("the same two numbers on every run") states no checkable result and is not run.
 * `expr // throws RangeError 'message'` states that expr throws that error (message optional).
 * Examples of declarations that no entry point exports (internal helpers) are not run.
 * Examples run in a temporary folder holding a link to examples/, so the files they write
 * (run.h5, ...) never land in the checkout.
 *
 * An example runs as an async function body with every export of @pathweave/geometry, core, io
 * (and io/plot) in scope; its imports of those packages are dropped, imports of node: modules
 * become dynamic imports. Types are stripped by typescript's transpiler.
 */
import { mkdtempSync, readdirSync, readFileSync, statSync, symlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative } from 'node:path';
import ts from 'typescript';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as geometry from '@pathweave/geometry';
import * as core from '@pathweave/core';
import * as io from '@pathweave/io';
import * as plot from '@pathweave/io/plot';
import * as cli from '@pathweave/io/cli';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { ROOT } from './support/run.js';

interface Example {
  file: string;
  line: number;
  owner: string;
  /** A function, class or variable (a value an entry point may export), not a type or member. */
  value: boolean;
  code: string;
}

interface Claim {
  line: number;
  text: string;
  expected: unknown;
}

const SOURCES = ['geometry', 'core', 'io'].map((p) => join(ROOT, 'packages', p, 'src'));

function sourceFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    if (statSync(path).isDirectory()) return sourceFiles(path);
    return name.endsWith('.ts') && !name.endsWith('.d.ts') ? [path] : [];
  });
}

/** Every `@example` block with the name of the declaration it documents. */
function examplesOf(path: string): Example[] {
  const text = readFileSync(path, 'utf8');
  const sf = ts.createSourceFile(path, text, ts.ScriptTarget.ES2022, true);
  const out: Example[] = [];
  const visit = (node: ts.Node): void => {
    for (const doc of ts.getJSDocCommentsAndTags(node)) {
      const tags = ts.isJSDoc(doc) ? (doc.tags ?? []) : [doc];
      for (const tag of tags) {
        if (tag.tagName.text !== 'example' || tag.parent !== doc) continue;
        const comment = typeof tag.comment === 'string' ? tag.comment : (ts.getTextOfJSDocComment(tag.comment) ?? '');
        const named = ts.isVariableStatement(node) ? node.declarationList.declarations[0] : node;
        const owner = (named as { name?: ts.Node } | undefined)?.name?.getText(sf) ?? ts.SyntaxKind[node.kind];
        const line = sf.getLineAndCharacterOfPosition(tag.getStart(sf)).line + 1;
        // The example's code is the raw text of the tag (the parsed comment loses `//` spacing), minus the " * " margins.
        const raw = text
          .slice(tag.getStart(sf), tag.getEnd())
          .replace(/^@example[ \t]*/, '')
          .split('\n')
          .map((l) => l.replace(/^\s*\*( |$)/, ''))
          .join('\n')
          .replace(/\s*\*?\/?\s*$/, '');
        const value = ts.isFunctionDeclaration(node) || ts.isClassDeclaration(node) || ts.isVariableStatement(node);
        if (comment.length > 0 || raw.length > 0) out.push({ file: relative(ROOT, path), line, owner, value, code: raw });
      }
    }
    ts.forEachChild(node, visit);
  };
  visit(sf);
  // A tag seen through both a declaration list and its declaration is kept once.
  return out.filter((e, i) => out.findIndex((o) => o.file === e.file && o.line === e.line) === i);
}

/** The literal at the start of a result comment, or undefined when the comment states none. */
export function statedResult(comment: string): { text: string; value: unknown } | undefined {
  const isLiteral = (n: ts.Expression): boolean => {
    if (ts.isParenthesizedExpression(n)) return isLiteral(n.expression);
    if (ts.isNumericLiteral(n) || ts.isStringLiteral(n) || ts.isNoSubstitutionTemplateLiteral(n)) return true;
    if (n.kind === ts.SyntaxKind.TrueKeyword || n.kind === ts.SyntaxKind.FalseKeyword || n.kind === ts.SyntaxKind.NullKeyword) return true;
    if (ts.isIdentifier(n)) return n.text === 'NaN' || n.text === 'Infinity' || n.text === 'undefined';
    if (ts.isPrefixUnaryExpression(n)) return n.operator === ts.SyntaxKind.MinusToken && isLiteral(n.operand);
    if (ts.isArrayLiteralExpression(n)) return n.elements.every((e) => isLiteral(e));
    if (ts.isObjectLiteralExpression(n)) {
      return n.properties.every((p) => ts.isPropertyAssignment(p) && !ts.isComputedPropertyName(p.name) && isLiteral(p.initializer));
    }
    return false;
  };
  // Longest prefix that is one literal, ended by the comment's end or by prose punctuation.
  for (let end = comment.length; end > 0; end--) {
    if (end < comment.length && !/^(:|\s+\(|\s*$)/.test(comment.slice(end))) continue;
    const text = comment.slice(0, end).trim();
    if (text.length === 0) continue;
    const sf = ts.createSourceFile('r.ts', `(${text});`, ts.ScriptTarget.ES2022, true);
    if (sf.statements.length !== 1 || (sf as unknown as { parseDiagnostics: unknown[] }).parseDiagnostics.length > 0) continue;
    const st = sf.statements[0]!;
    if (!ts.isExpressionStatement(st) || !isLiteral(st.expression)) continue;
    return { text, value: new Function(`return (${text});`)() as unknown };
  }
  return undefined;
}

/** Numbers as written: the tolerance is half a unit of the last digit written. */
function numberMatches(actual: unknown, written: string, expected: number): boolean {
  if (typeof actual !== 'number') return false;
  if (Number.isNaN(expected)) return Number.isNaN(actual);
  if (!Number.isFinite(expected)) return actual === expected;
  const m = /^-?(\d*)(?:\.(\d+))?(?:e([-+]?\d+))?$/i.exec(written.trim());
  // An integer as written: equal up to the rounding of a few operations in double precision.
  if (m === null || (m[2] === undefined && m[3] === undefined)) return Math.abs(actual - expected) <= 1e-12 * Math.max(1, Math.abs(expected));
  const decimals = (m[2]?.length ?? 0) - Number(m[3] ?? 0);
  return Math.abs(actual - expected) <= 0.5 * 10 ** -decimals * (1 + 1e-9);
}

/** Compare a value with a literal's source text, element by element. */
function matches(actual: unknown, node: ts.Expression, value: unknown): boolean {
  if (ts.isParenthesizedExpression(node)) return matches(actual, node.expression, value);
  if (typeof value === 'number') return numberMatches(actual, node.getText(), value);
  if (ts.isArrayLiteralExpression(node)) {
    const list = ArrayBuffer.isView(actual) ? Array.from(actual as unknown as ArrayLike<unknown>) : actual;
    if (!Array.isArray(list) || list.length !== node.elements.length) return false;
    return node.elements.every((e, i) => matches(list[i], e, (value as unknown[])[i]));
  }
  if (ts.isObjectLiteralExpression(node)) {
    if (typeof actual !== 'object' || actual === null) return false;
    return node.properties.every((p) => {
      const a = p as ts.PropertyAssignment;
      const key = ts.isIdentifier(a.name) || ts.isStringLiteral(a.name) || ts.isNumericLiteral(a.name) ? a.name.text : a.name.getText();
      return matches((actual as Record<string, unknown>)[key], a.initializer, (value as Record<string, unknown>)[key]);
    });
  }
  return Object.is(actual, value);
}

function literalNode(text: string): ts.Expression {
  const sf = ts.createSourceFile('r.ts', `(${text});`, ts.ScriptTarget.ES2022, true);
  return (sf.statements[0] as ts.ExpressionStatement).expression;
}

/** The example as a runnable body: claims become `__claim(i, value)` calls. */
function instrument(example: Example): { body: string; claims: Claim[] } {
  const claims: Claim[] = [];
  const lines = example.code.split('\n').map((line, i) => {
    const at = line.search(/\s\/\/\s|\s\/\/$/);
    const imported = /^\s*import\s+(type\s+)?(\{[^}]*\}|\*\s+as\s+\w+)\s+from\s+['"]([^'"]+)['"];?\s*$/.exec(line);
    if (imported !== null) {
      if (imported[1] !== undefined || imported[3]!.startsWith('@pathweave/')) return '';
      const names = imported[2]!.startsWith('*') ? imported[2]!.replace(/^\*\s+as\s+/, '') : imported[2]!.replace(/\bas\b/g, ':');
      return `const ${names} = await import(${JSON.stringify(imported[3])});`;
    }
    if (at < 0) return line;
    const code = line.slice(0, at).trim();
    const thrown = /^\s*\/\/\s*throws\s+(\w+)(?:\s+(['"])(.*)\2)?/.exec(line.slice(at));
    if (thrown !== null && code.length > 0) {
      const index = claims.length;
      claims.push({
        line: example.line + i,
        text: `throws ${thrown[1]}`,
        expected: {
          throws: thrown[1],
          message: thrown[2] === undefined ? undefined : (new Function(`return ${thrown[2]}${thrown[3]}${thrown[2]};`)() as string),
        },
      });
      const expr = code.replace(/;$/, '');
      return `try { await (async () => (${expr}))(); __claim(${index}, { threw: undefined }); } catch (e) { __claim(${index}, { threw: e.name, message: e.message }); }`;
    }
    const stated = statedResult(line.slice(at).replace(/^\s*\/\/\s?/, ''));
    if (stated === undefined || code.length === 0) return line;
    const sf = ts.createSourceFile('l.ts', code, ts.ScriptTarget.ES2022, true);
    if (sf.statements.length !== 1) return line;
    const st = sf.statements[0]!;
    const index = claims.length;
    if (ts.isExpressionStatement(st)) {
      claims.push({ line: example.line + i, text: stated.text, expected: stated.value });
      return `__claim(${index}, (${st.expression.getText(sf)}));`;
    }
    if (ts.isVariableStatement(st) && st.declarationList.declarations.length === 1 && ts.isIdentifier(st.declarationList.declarations[0]!.name)) {
      claims.push({ line: example.line + i, text: stated.text, expected: stated.value });
      return `${code}\n__claim(${index}, ${st.declarationList.declarations[0]!.name.text});`;
    }
    return line;
  });
  const js = ts.transpileModule(lines.join('\n'), { compilerOptions: { target: ts.ScriptTarget.ES2022, module: ts.ModuleKind.ESNext } }).outputText;
  return { body: js.replace(/^export \{\};\s*$/m, ''), claims };
}

// Examples may use node's fs, os and path helpers (join, readFileSync, tmpdir, ...) without importing them.
// The one shared fixture: `scenario` in an example is examples/one-path-28ghz.json, as the io
// package's documentation says (instead of the same literal repeated in a dozen examples).
const exampleScenario = io.parseScenarioText(readFileSync(join(ROOT, 'examples', 'one-path-28ghz.json'), 'utf8'), 'examples/one-path-28ghz.json').scenario;
const scope: Record<string, unknown> = { ...fs, ...os, ...path, ...geometry, ...core, ...io, ...plot, ...cli, scenario: exampleScenario };
delete scope.default;
const AsyncFunction = Object.getPrototypeOf(async () => undefined).constructor as new (...args: string[]) => (...a: unknown[]) => Promise<void>;

const examples = SOURCES.flatMap((dir) => sourceFiles(dir)).flatMap(examplesOf);
const publicExamples = examples.filter((e) => !e.value || e.owner in scope);
const runnable = publicExamples.map((e) => ({ example: e, ...instrument(e) })).filter((x) => x.claims.length > 0);

let home = '';
beforeAll(() => {
  home = process.cwd();
  const dir = mkdtempSync(join(tmpdir(), 'pathweave-doctest-'));
  symlinkSync(join(ROOT, 'examples'), join(dir, 'examples'));
  process.chdir(dir);
});
afterAll(() => process.chdir(home));

describe('doc examples state true results', () => {
  it('finds the examples and the result syntax', () => {
    // The count of examples is a property of today's sources: a parser that finds none is broken.
    expect(examples.length).toBeGreaterThan(300);
    expect(runnable.length).toBeGreaterThan(100);
    expect(statedResult('[2, 4, 1, 1]: [S, K, Nr, Nt]')?.value).toEqual([2, 4, 1, 1]);
    expect(statedResult('0.6190338581222481 (the same on every run)')?.value).toBe(0.6190338581222481);
    expect(statedResult('the same two numbers on every run')).toBeUndefined();
    expect(numberMatches(0.98792958, '0.9879', 0.9879)).toBe(true);
    expect(numberMatches(0.98797, '0.9879', 0.9879)).toBe(false);
    expect(numberMatches(3.0000001, '3', 3)).toBe(false);
  });

  it.each(runnable.map((r) => [`${r.example.file}:${r.example.line} ${r.example.owner}`, r] as const))('%s', async (_name, r) => {
    const got: unknown[] = [];
    // The body in a block of its own, so an example may declare a name of the scope (its own `scenario`).
    const fn = new AsyncFunction(...Object.keys(scope), '__claim', `{\n${r.body}\n}`);
    await fn(...Object.values(scope), (i: number, v: unknown) => {
      got[i] = v;
    });
    r.claims.forEach((c, i) => {
      const stated = c.expected as { throws?: string; message?: string };
      if (c.text.startsWith('throws ')) {
        const thrown = got[i] as { threw?: string; message?: string };
        expect(thrown.threw, `line ${c.line}: stated ${c.text}`).toBe(stated.throws);
        if (stated.message !== undefined) expect(thrown.message, `line ${c.line}`).toBe(stated.message);
        return;
      }
      const ok = matches(got[i], literalNode(c.text), c.expected);
      expect(
        ok,
        `line ${c.line}: stated ${c.text}, got ${JSON.stringify(got[i], (_k, v) => (ArrayBuffer.isView(v) ? Array.from(v as unknown as ArrayLike<number>) : v))}`,
      ).toBe(true);
    });
  });
});
