/**
 * Dual-polarised arrays on traced scenes: reciprocity with polarisation (swapping the ends
 * gives H^T, Lorentz reciprocity of the Fresnel transfer), cross-polar leakage of specular
 * paths only through the geometry, and the dual-polarised demo scenario.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { buildScenario, fillBlock, safeParseScenario, type Scenario } from '@pathweave/io';
import { ROOT } from './support/run.js';

function parsed(doc: unknown): Scenario {
  const r = safeParseScenario(doc);
  if (!r.ok) throw new Error(JSON.stringify(r.problems));
  return r.scenario;
}

const demo = (): Record<string, any> =>
  JSON.parse(readFileSync(join(ROOT, 'examples', 'dual-polarized-street-corner-28ghz.json'), 'utf8')) as Record<string, any>;

describe('dual-polarised arrays', () => {
  it('are reciprocal: swapping transmitter and receiver gives H^T for every subcarrier', () => {
    // Reciprocity of the tracer's polarimetric transfer (T for the reverse path is T^T in the
    // bases of polarization.ts, Lorentz reciprocity, M) makes H_ba[k] = H_ab[k]^T.
    const doc = demo();
    delete doc.clusters;
    doc.timing = { subframeS: 0.001, subframes: 1 };
    doc.band = { subcarriers: 4, spacingHz: 120e3 };
    doc.fading = { model: 'static' };
    doc.precision = 'complex128';
    delete doc.receiver.velocity;
    const forward = buildScenario(parsed(doc));
    const backward = buildScenario(parsed({ ...doc, transmitter: doc.receiver, receiver: doc.transmitter }));
    expect(forward.users[0]!.generator.pathCount).toBeGreaterThan(3);
    const a = forward.generator.fill(forward.generator.allocate(1), 0, 1);
    const b = backward.generator.fill(backward.generator.allocate(1), 0, 1);
    const [, K, Nr, Nt] = forward.shape as [number, number, number, number];
    expect(backward.shape).toEqual([1, K, Nt, Nr]);
    let err = 0,
      norm = 0;
    for (let k = 0; k < K; k++) {
      for (let m = 0; m < Nr; m++) {
        for (let n = 0; n < Nt; n++) {
          const i = 2 * ((k * Nr + m) * Nt + n),
            j = 2 * ((k * Nt + n) * Nr + m);
          err = Math.max(err, Math.hypot(a[i]! - b[j]!, a[i + 1]! - b[j + 1]!));
          norm = Math.max(norm, Math.hypot(a[i]!, a[i + 1]!));
        }
      }
    }
    expect(norm).toBeGreaterThan(0);
    expect(err / norm).toBeLessThan(1e-9);
  });

  it('the dual-polarised demo fills [S, K, 4, 32] with finite values and splits power over both receive ports', () => {
    const doc = demo();
    doc.timing.subframes = 2;
    const built = buildScenario(parsed(doc));
    expect(built.shape).toEqual([2, 32, 4, 32]);
    const out = new Float32Array(2 * 2 * built.valuesPerSubframe);
    fillBlock(built, out, 0, 2);
    expect(out.every(Number.isFinite)).toBe(true);
    // Receive ports 0 and 2 are vertical, 1 and 3 horizontal (element-major); with a slant
    // +-45 transmitter both polarisations receive power within a few dB of each other.
    let v = 0,
      h = 0;
    for (let i = 0; i < out.length; i += 2) {
      const m = Math.floor(i / 2 / 32) % 4;
      if (m % 2 === 0) v += out[i]! ** 2 + out[i + 1]! ** 2;
      else h += out[i]! ** 2 + out[i + 1]! ** 2;
    }
    expect(Math.abs(10 * Math.log10(v / h))).toBeLessThan(10);
  });
});
