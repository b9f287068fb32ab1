/**
 * docs/library.md runs as written: every js block is run with node from the repository root and
 * prints exactly the text block under it. The worked capacity figure is recomputed with numpy
 * (numpy.linalg.svd and log2 det(I + (snr / Nt) H H^H), Telatar 1999 (M)) from the same subframes
 * written by `generate`; the test-bench SNR is checked against a bound derived from the sample
 * count and the noise floor against k T B F computed here. No doc or script calls a bare
 * `npx pathweave`, which falls through to the registry outside the repository.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { dbmToWatts, thermalNoisePowerW } from '@pathweave/core';
import { generate } from '@pathweave/io';
import { hasPython, pythonJson } from './support/python.js';
import { librarySnippets } from './support/docs.js';
import { ROOT } from './support/run.js';

const DOC = readFileSync(join(ROOT, 'docs', 'library.md'), 'utf8');

const snippets = librarySnippets(DOC);
const dir = join(ROOT, 'out', 'docs-library');
const printed: string[] = [];

function runSnippet(i: number): string {
  mkdirSync(dir, { recursive: true });
  const file = join(dir, `snippet-${i + 1}.mjs`);
  writeFileSync(file, snippets[i]!.code);
  const r = spawnSync(process.execPath, [file], { cwd: ROOT, encoding: 'utf8', timeout: 300_000 });
  expect(r.status, `docs/library.md snippet ${i + 1}:\n${r.stderr}`).toBe(0);
  return r.stdout;
}

describe('docs/library.md', () => {
  it('has the three worked examples, each with its printed output', () => {
    expect(snippets.length).toBe(3);
    expect([...DOC.matchAll(/^```js\n/gm)].length).toBe(3); // no js block without its output
  });

  snippets.forEach((s, i) => {
    it(`snippet ${i + 1} prints exactly what the guide shows`, () => {
      printed[i] = runSnippet(i);
      expect(printed[i]).toBe(s.output);
    }, 300_000);
  });

  it.skipIf(!hasPython('numpy'))(
    'the singular values and the mean capacity agree with numpy on the tensor `generate` writes (C)',
    async () => {
      const code = snippets[0]!.code;
      const literal = code.slice(code.indexOf('const scenario = ') + 'const scenario = '.length, code.indexOf('\n};\n') + 2);
      const scenario = new Function(`return (${literal});`)() as Record<string, any>;
      const out = join(dir, 'capacity.npy');
      await generate(scenario as never, JSON.stringify(scenario), { out, format: 'npy' });
      const snr = dbmToWatts(23) / thermalNoisePowerW(64 * 120e3, 7);
      const ref = pythonJson<{ s: number[]; c: number }>(
        `import json, sys, numpy as np
H = np.load(sys.argv[1]).astype(np.complex128)[:, 32]          # [S, Nr, Nt] at k = 32
snr = float(sys.argv[2]); Nt = H.shape[2]
s = np.linalg.svd(H[0], compute_uv=False)
c = [np.log2(np.linalg.det(np.eye(H.shape[1]) + (snr / Nt) * h @ h.conj().T).real) for h in H]
print(json.dumps({'s': s[:3].tolist(), 'c': float(np.mean(c))}))`,
        [out, String(snr)],
      );
      const lines = snippets[0]!.output.split('\n');
      const sv = /largest singular values (\S+) (\S+) (\S+)$/.exec(lines[3]!)!.slice(1).map(Number);
      // Printed to 5 significant digits: agreement to 1e-4 relative.
      sv.forEach((v, j) => expect(Math.abs(v / ref.s[j]! - 1)).toBeLessThan(1e-4));
      const capacity = Number(/: (\S+) bit\/s\/Hz$/.exec(lines[4]!)![1]);
      expect(Math.abs(capacity - ref.c)).toBeLessThanOrEqual(0.0005 + 1e-9); // printed to 3 decimals
    },
    300_000,
  );

  it('the test-bench SNR: noise floor equals k T B F and the measured SNR is within 4/sqrt(M) of the floor alone', () => {
    const line = snippets[2]!.output.trim();
    const m = /^noise floor (\S+) dBm, received SNR (\S+) dB over (\d+) samples per antenna \(floor alone: (\S+) dB\)$/.exec(line)!;
    expect(m).not.toBeNull();
    // k = 1.380649e-23 J/K (CODATA 2018, exact in the 2019 SI) (M); T = 290 K, B = 61.44 MHz, F = 7 dB (C: numpy-free arithmetic).
    const kTBF = 10 * Math.log10(1.380649e-23 * 290 * 61.44e6) + 30 + 7;
    expect(Math.abs(Number(m[1]) - kTBF)).toBeLessThanOrEqual(0.005 + 1e-9);
    // |w|^2 of circular Gaussian noise is exponential (std = mean): the noise power measured over
    // M = Nr N samples has relative std 1/sqrt(M); 4 sigma, plus the 0.01 dB rounding of the print.
    const M = 2 * Number(m[3]);
    const bound = 10 * Math.log10(1 + 4 / Math.sqrt(M)) + 0.01;
    expect(Math.abs(Number(m[2]) - Number(m[4]))).toBeLessThan(bound);
  });
});

describe('the command is called through the installed binary', () => {
  /** Files where a user reads or runs commands: READMEs, docs, examples, scripts, the CLI's help texts. */
  function files(): string[] {
    const out = ['README.md', ...['geometry', 'core', 'io'].map((p) => `packages/${p}/README.md`)];
    for (const d of ['docs', 'examples', 'scripts', 'packages/io/src/cli']) {
      for (const f of readdirSync(join(ROOT, d), { recursive: true }) as string[]) {
        if (/\.(md|mjs|js|ts|sh|json|txt)$/.test(f) && !f.startsWith('api/')) out.push(`${d}/${f}`);
      }
    }
    return out;
  }
  it('never a bare `npx pathweave` (only `npx --no-install pathweave` or the bin path)', () => {
    const offenders = files().filter((f) => /npx\s+pathweave\b|"npx",\s*"pathweave"/.test(readFileSync(join(ROOT, f), 'utf8')));
    expect(offenders).toEqual([]);
  });
});
