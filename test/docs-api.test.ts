/**
 * The API reference builds with typedoc (typedoc.json at the root) without any warning, so CI
 * builds it, every export carries a doc comment, and every exported function and class an
 * `@example` (test/doctest.test.ts runs the examples and checks the results they state).
 * Constants, interfaces and type aliases need no example. Every warning fails the test; the only
 * exceptions are the files listed in `EXAMPLES_EXCLUDED` below, each with its reason.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT, tempDir } from './support/run.js';

interface Reflection {
  name: string;
  kind: number;
  comment?: { blockTags?: { tag: string; content: { text: string }[] }[]; summary?: { text: string }[] };
  signatures?: Reflection[];
  children?: Reflection[];
  sources?: { fileName: string }[];
}

/**
 * Files whose exports may still lack an `@example`, each with the reason (the list only shrinks).
 * Every other exported function and class needs one.
 */
const EXAMPLES_EXCLUDED: Record<string, string> = {};

/** Strip ANSI colours from typedoc's output. */
// eslint-disable-next-line no-control-regex -- ESC starts the colour codes removed here
const plain = (s: string): string => s.replace(/\x1b\[[0-9;]*m/g, '');

describe('API reference (typedoc)', () => {
  const dir = tempDir('pathweave-typedoc-');
  const json = join(dir, 'api.json');
  let output = '';
  let status = -1;
  const build = (): void => {
    if (status !== -1) return;
    const r = spawnSync(process.execPath, [join(ROOT, 'node_modules', 'typedoc', 'bin', 'typedoc'), '--out', join(dir, 'html'), '--json', json], {
      cwd: ROOT,
      encoding: 'utf8',
      timeout: 240_000,
    });
    status = r.status ?? -1;
    output = plain(`${r.stdout}\n${r.stderr}`);
  };

  it('builds without any warning', () => {
    build();
    expect(status, output).toBe(0);
    const warnings = output.split('\n').filter((l) => /\[(warning|error)\]/.test(l));
    expect(warnings, output).toEqual([]);
    expect(existsSync(join(dir, 'html', 'index.html'))).toBe(true);
  }, 300_000);

  it('documents every export, and every function and class with an @example', () => {
    build();
    const project = JSON.parse(readFileSync(json, 'utf8')) as Reflection;
    const topKinds = new Set([8, 32, 64, 128, 256, 2097152]); // enum, variable, function, class, interface, type alias
    const undocumented: string[] = [];
    const withoutExample: string[] = [];
    const filesWithoutExample = new Set<string>();
    let exports = 0;
    for (const mod of project.children ?? []) {
      for (const r of mod.children ?? []) {
        if (!topKinds.has(r.kind)) continue;
        exports++;
        const comments = [r.comment, ...(r.signatures ?? []).map((s) => s.comment)].filter((c) => c !== undefined);
        const file = r.sources?.[0]?.fileName ?? '';
        if (comments.length === 0) undocumented.push(`${file}: ${r.name}`);
        if (r.kind !== 64 && r.kind !== 128) continue; // examples are asked of functions and classes
        const example = comments.some((c) =>
          (c.blockTags ?? []).some(
            (t) =>
              t.tag === '@example' &&
              t.content
                .map((x) => x.text)
                .join('')
                .trim().length > 0,
          ),
        );
        if (example) continue;
        filesWithoutExample.add(file);
        if (!(file in EXAMPLES_EXCLUDED)) withoutExample.push(`${file}: ${r.name}`);
      }
    }
    expect(exports).toBeGreaterThan(300);
    expect(undocumented).toEqual([]);
    expect(withoutExample).toEqual([]);
    // an exclusion that no longer excludes anything is stale and must go
    expect(Object.keys(EXAMPLES_EXCLUDED).filter((f) => !filesWithoutExample.has(f))).toEqual([]);
  }, 300_000);
});
