/**
 * The assembled channel against an independent numpy evaluation of design.md's formula
 * H_s[k] = sum_l rho_l exp(-j 2 pi f_k tau_l) r_rx(u_arr) r_tx(u_dep)^T, with the arrays,
 * orientations and directions rebuilt in numpy from the scenario file alone.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { hasPython, pythonJson } from './support/python.js';
import { ROOT, runCli, tempDir } from './support/run.js';

const NUMPY_REFERENCE = String.raw`
import json, sys
import numpy as np
sc = json.load(open(sys.argv[1]))
H = np.load(sys.argv[2])
c = 299792458.0
lam = c / sc['carrierHz']; k0 = 2 * np.pi / lam
def rot(o):
    y, p, r = (np.deg2rad(o.get(k, 0.0)) for k in ('yawDeg', 'pitchDeg', 'rollDeg'))
    Rz = np.array([[np.cos(y), -np.sin(y), 0], [np.sin(y), np.cos(y), 0], [0, 0, 1]])
    Ry = np.array([[np.cos(p), 0, np.sin(p)], [0, 1, 0], [-np.sin(p), 0, np.cos(p)]])
    Rx = np.array([[1, 0, 0], [0, np.cos(r), -np.sin(r)], [0, np.sin(r), np.cos(r)]])
    return Rz @ Ry @ Rx
def offsets(a):
    d = a.get('spacingWavelengths', 0.5) * lam
    if a['kind'] == 'ula':
        N = a['elements']; P = np.zeros((N, 3)); P[:, 1] = (np.arange(N) - (N - 1) / 2) * d
    elif a['kind'] == 'upa':
        R, C = a['rows'], a['columns']; row, col = np.divmod(np.arange(R * C), C)
        P = np.zeros((R * C, 3)); P[:, 1] = (col - (C - 1) / 2) * d; P[:, 2] = (row - (R - 1) / 2) * d
    else:
        P = np.array(a['positions'], dtype=float)
    return P @ rot(a.get('orientation', {})).T
def unit(az, el):
    az, el = np.deg2rad(az), np.deg2rad(el)
    return np.array([np.cos(el) * np.cos(az), np.cos(el) * np.sin(az), np.sin(el)])
Pt = offsets(sc['transmitter']['array']); Pr = offsets(sc['receiver']['array'])
K = sc['band']['subcarriers']; f = (np.arange(K) - K // 2) * sc['band']['spacingHz']
ref = np.zeros((K, len(Pr), len(Pt)), dtype=complex)
for p in sc['paths']:
    rho = 10 ** (p['powerDb'] / 20) * np.exp(1j * np.deg2rad(p.get('phaseDeg', 0.0)))
    rt = np.exp(1j * k0 * (Pt @ unit(*p['aodDeg'])))
    rr = np.exp(1j * k0 * (Pr @ unit(*p['aoaDeg'])))
    ref += rho * np.exp(-2j * np.pi * f * p['delayS'])[:, None, None] * np.outer(rr, rt)[None]
errors = [float(np.linalg.norm(H[s] - ref) / np.linalg.norm(ref)) for s in range(H.shape[0])]
print(json.dumps({'dtype': str(H.dtype), 'shape': list(H.shape), 'errors': errors}))
`;

describe('frequency-domain channel against numpy (design.md formula)', () => {
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
    for (const e of result.errors) expect(e).toBeLessThanOrEqual(2e-5); // numpy evaluation of design.md (C)
  });
});
