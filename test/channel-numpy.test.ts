/**
 * The assembled channel against an independent numpy evaluation of docs/conventions.md's formula
 * H_s[k] = sum_l rho_l exp(-j 2 pi f_k tau_l) r_rx(u_arr) r_tx(u_dep)^T, with the arrays,
 * orientations and directions rebuilt in numpy from the scenario file alone.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { NUMPY_REFERENCE } from './support/numpy-reference.js';
import { hasPython, pythonJson } from './support/python.js';
import { ROOT, runCli, tempDir } from './support/run.js';

describe('frequency-domain channel against numpy (docs/conventions.md formula)', () => {
  it.runIf(hasPython('numpy'))('three static paths, oriented UPA and ULA: relative Frobenius error <= 2e-5 per subframe in complex64', () => {
    const dir = tempDir();
    const scenario = join(ROOT, 'test', 'fixtures', 'three-path-static.json');
    const out = join(dir, 'H.npy');
    const r = runCli(['generate', scenario, '--out', out, '--quiet']);
    expect(r.status, r.stderr).toBe(0);
    const result = pythonJson<{ dtype: string; shape: number[]; errors: number[] }>(NUMPY_REFERENCE, [scenario, out]);
    const sc = JSON.parse(readFileSync(scenario, 'utf8')) as { timing: { subframes: number } };
    expect(result.dtype).toBe('complex64');
    expect(result.shape).toEqual([sc.timing.subframes, 33, 3, 8]);
    for (const e of result.errors) expect(e).toBeLessThanOrEqual(2e-5); // numpy evaluation of docs/conventions.md (C)
  });
});
