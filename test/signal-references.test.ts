/**
 * The signal path against numpy/scipy: OFDM against numpy.fft in the centred order, the tap
 * frequency response against numpy.fft.fft, Boltzmann's constant and k T against
 * scipy.constants, DFT codebooks against numpy's Gram matrix.
 */
import { describe, expect, it } from 'vitest';
import { BOLTZMANN_J_PER_K, OfdmModem, RandomStream, tapsToSubcarriers, thermalNoisePowerW, ulaCodebook, upaCodebook, wattsToDbm } from '@pathweave/core';
import { hasPython, pythonJson } from './support/python.js';

const py = hasPython('numpy', 'scipy');

function complexNoise(values: number, seed: number): Float64Array {
  const rs = new RandomStream(seed, 'test-data');
  const out = new Float64Array(2 * values);
  for (let i = 0; i < out.length; i++) out[i] = rs.nextNormal();
  return out;
}

const HEAD = `
import json, sys
import numpy as np
def cplx(a): return np.asarray(a[0::2]) + 1j * np.asarray(a[1::2])
def flat(z): z = np.asarray(z).ravel(); return np.stack([z.real, z.imag], -1).ravel().tolist()
`;

describe.skipIf(!py)('signal path against numpy / scipy', () => {
  it('OfdmModem.modulate = sqrt(K) ifft(ifftshift(X)) with the tail as prefix; demodulate = fftshift(fft(y)) / sqrt(K) (numpy.fft, C)', () => {
    const K = 128,
      cp = 9,
      symbols = 2;
    const modem = new OfdmModem({ subcarriers: K, cyclicPrefix: cp });
    const X = complexNoise(symbols * K, 1);
    const x = modem.modulate(X, 1, symbols);
    const y = complexNoise(symbols * modem.symbolLength, 2);
    const Y = modem.demodulate(y, 1, symbols * modem.symbolLength);
    const ref = pythonJson<{ x: number[]; Y: number[] }>(
      `${HEAD}
d = json.load(sys.stdin); K, cp = d['K'], d['cp']
X = cplx(d['X']).reshape(-1, K)
t = np.sqrt(K) * np.fft.ifft(np.fft.ifftshift(X, axes=-1), axis=-1)
x = np.concatenate([t[:, K - cp:], t], axis=-1)
y = cplx(d['y']).reshape(-1, K + cp)[:, cp:]
Y = np.fft.fftshift(np.fft.fft(y, axis=-1), axes=-1) / np.sqrt(K)
print(json.dumps({'x': flat(x), 'Y': flat(Y)}))`,
      [],
      JSON.stringify({ K, cp, X: Array.from(X), y: Array.from(y) }),
    );
    let worst = 0;
    for (let i = 0; i < x.length; i++) worst = Math.max(worst, Math.abs(x[i]! - ref.x[i]!));
    for (let i = 0; i < Y.length; i++) worst = Math.max(worst, Math.abs(Y[i]! - ref.Y[i]!));
    expect(worst).toBeLessThan(1e-12);
  });

  it('tapsToSubcarriers with count = K equals fftshift(fft(h, axis=0)) (docs/conventions.md "DFT of h equals H"; numpy.fft, C)', () => {
    const K = 32,
      Nr = 2,
      Nt = 3;
    const h = complexNoise(K * Nr * Nt, 3);
    const H = tapsToSubcarriers(h, K, Nr, Nt, K);
    const ref = pythonJson<number[]>(
      `${HEAD}
d = json.load(sys.stdin)
h = cplx(d['h']).reshape(d['K'], d['Nr'], d['Nt'])
print(json.dumps(flat(np.fft.fftshift(np.fft.fft(h, axis=0), axes=0))))`,
      [],
      JSON.stringify({ K, Nr, Nt, h: Array.from(h) }),
    );
    let worst = 0;
    for (let i = 0; i < H.length; i++) worst = Math.max(worst, Math.abs(H[i]! - ref[i]!));
    expect(worst).toBeLessThan(1e-12);
  });

  it('Boltzmann constant and k T0 in dBm/Hz (scipy.constants.k, CODATA 2018, C)', () => {
    const ref = pythonJson<{ k: number; dbm: number; nf: number }>(
      `import json, math
from scipy import constants as c
print(json.dumps({'k': c.k, 'dbm': 10 * math.log10(c.k * 290) + 30, 'nf': 10 * math.log10(c.k * 295 * 20e6 * 10 ** 0.9) + 30}))`,
    );
    expect(BOLTZMANN_J_PER_K).toBe(ref.k);
    expect(Math.abs(wattsToDbm(thermalNoisePowerW(1)) - ref.dbm)).toBeLessThan(1e-9);
    expect(Math.abs(wattsToDbm(thermalNoisePowerW(20e6, 9, 295)) - ref.nf)).toBeLessThan(1e-9);
  });

  it('DFT codebooks: numpy Gram matrix W^H W = I, and each beam matches exp(j pi n u) / sqrt(N) up to a constant phase (check-values.md, C)', () => {
    const cases = [ulaCodebook(8), ulaCodebook(16, { side: 'receive' }), upaCodebook(2, 4)];
    const ref = pythonJson<{ gram: number; steer: number }[]>(
      `${HEAD}
out = []
for c in json.load(sys.stdin):
    W = cplx(c['w']).reshape(c['N'], c['B'])
    gram = float(np.abs(W.conj().T @ W - np.eye(c['B'])).max())
    steer = 0.0
    if c['ula']:
        n = np.arange(c['N'])
        for b in range(c['B']):
            u = 2 * b / c['N'] - 1
            a = np.exp(1j * np.pi * n * u) / np.sqrt(c['N'])
            w = W[:, b] if c['rx'] else W[:, b].conj()
            steer = max(steer, abs(abs(np.vdot(a, w)) - 1))
    out.append({'gram': gram, 'steer': steer})
print(json.dumps(out))`,
      [],
      JSON.stringify(cases.map((c, i) => ({ w: Array.from(c.weights), N: c.elements, B: c.beams, ula: i < 2, rx: c.side === 'receive' }))),
    );
    for (const r of ref) {
      expect(r.gram).toBeLessThan(1e-12);
      expect(r.steer).toBeLessThan(1e-12);
    }
  });
});
