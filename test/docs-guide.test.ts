/**
 * docs/guide.md runs as written: its `npx --no-install pathweave` commands (run with the built CLI from the
 * repository root, in order), then every fenced python block with the reference interpreter
 * against the files those commands wrote, and every json block as a scenario. Links between
 * the docs and to their pictures point at files that exist.
 */
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseScenarioText } from '@pathweave/io';
import { hasPython, python } from './support/python.js';
import { ROOT, runCli } from './support/run.js';

const GUIDE = readFileSync(join(ROOT, 'docs', 'guide.md'), 'utf8');

/** Fenced blocks of one language, in document order. */
function blocks(markdown: string, lang: string): string[] {
  return [...markdown.matchAll(new RegExp('^```' + lang + '\\n([\\s\\S]*?)^```', 'gm'))].map((m) => m[1]!);
}

/** The command lines of the sh blocks that call the CLI, without trailing comments. */
function cliCommands(markdown: string): string[][] {
  return blocks(markdown, 'sh')
    .flatMap((b) => b.split('\n'))
    .map((l) => l.replace(/\s+#.*$/, '').trim())
    .filter((l) => l.startsWith('npx --no-install pathweave '))
    .map((l) => l.slice('npx --no-install pathweave '.length).split(/\s+/));
}

describe('docs/guide.md', () => {
  it('has commands and snippets to run', () => {
    expect(cliCommands(GUIDE).length).toBeGreaterThanOrEqual(10);
    expect(blocks(GUIDE, 'python').length).toBeGreaterThanOrEqual(4);
  });

  it.skipIf(!hasPython('numpy', 'h5py'))(
    'its commands succeed and then its python snippets run against their outputs',
    () => {
      // Parts of an earlier run (another build) would be kept by a rerun whose manifests verify: start clean.
      const outDir = join(ROOT, 'out');
      mkdirSync(outDir, { recursive: true }); // the guide's `mkdir -p out`
      if (existsSync(outDir)) for (const f of readdirSync(outDir)) if (f.startsWith('guide-')) rmSync(join(outDir, f), { force: true });
      for (const args of cliCommands(GUIDE)) {
        const r = runCli(args);
        expect(r.status, `pathweave ${args.join(' ')}\n${r.stderr}`).toBe(0);
      }
      const snippets = blocks(GUIDE, 'python');
      snippets.forEach((code, i) => {
        // Each snippet names only files under out/ that a command above wrote.
        for (const m of code.matchAll(/'(out\/[^']+)'/g)) expect(existsSync(join(ROOT, m[1]!)), `snippet ${i + 1} reads ${m[1]}`).toBe(true);
        let out: string;
        try {
          out = python(`import os\nos.chdir(${JSON.stringify(ROOT)})\n${code}`);
        } catch (e) {
          throw new Error(`python snippet ${i + 1} of docs/guide.md failed:\n${code}\n${(e as { stderr?: string }).stderr ?? String(e)}`);
        }
        expect(out.trim().length, `snippet ${i + 1} prints its result`).toBeGreaterThan(0);
      });
    },
    600_000,
  ); // some twenty runs of the CLI: minutes on a loaded machine

  it('its json blocks are valid scenarios', () => {
    const json = blocks(GUIDE, 'json');
    expect(json.length).toBeGreaterThanOrEqual(1);
    for (const text of json) expect(() => parseScenarioText(text, 'guide')).not.toThrow();
  });
});

describe('links of the docs', () => {
  for (const file of ['README.md', 'docs/guide.md', 'docs/conventions.md']) {
    it(`${file}: relative links and images point at files that exist`, () => {
      const text = readFileSync(join(ROOT, file), 'utf8');
      const targets = [...text.matchAll(/\]\(([^)#\s]+)(#[^)]*)?\)/g)].map((m) => m[1]!).filter((t) => !/^[a-z]+:/.test(t));
      expect(targets.length).toBeGreaterThan(0);
      // docs/datasets.md and docs/performance.md are written by colleagues; docs/api is built by typedoc.
      const pending = new Set(['docs/datasets.md', 'docs/performance.md', 'docs/api/index.html']);
      for (const t of targets) {
        const path = join(ROOT, dirname(file), t);
        const rel = path.slice(ROOT.length).replace(/^\/+/, '');
        if (pending.has(rel) && !existsSync(path)) continue;
        expect(existsSync(path), `${file} links ${t}`).toBe(true);
      }
    });
  }

  it('the README shows a picture near the top and links every doc', () => {
    const readme = readFileSync(join(ROOT, 'README.md'), 'utf8');
    const firstImage = readme.search(/!\[[^\]]+\]\(docs\/images\/[^)]+\.png\)/);
    expect(firstImage).toBeGreaterThan(0);
    expect(firstImage).toBeLessThan(readme.indexOf('## A first dataset'));
    for (const doc of ['docs/guide.md', 'docs/conventions.md', 'docs/datasets.md', 'docs/fading.md', 'docs/performance.md'])
      expect(readme).toContain(`](${doc})`);
    expect(readme).toContain('npx typedoc');
  });
});
