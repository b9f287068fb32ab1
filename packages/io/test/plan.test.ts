import { totalmem } from 'node:os';
import { describe, expect, it } from 'vitest';
import { buildPlan, buildScenario } from '../src/scenario/build.js';
import { outputEstimate, planScenario, sideArrayBytes } from '../src/scenario/plan.js';
import { parseScenarioText } from '../src/scenario/validate.js';
import { checkRequest, RequestError, sideArrays } from '../src/dataset/generate.js';
import { DATASET_ARRAYS, DATASET_ATTRIBUTES, datasetArray } from '../src/dataset/layout.js';
import { isPerSubframe } from '../src/dataset/merge.js';
import type { Scenario } from '../src/scenario/schema.js';

const explicit = (): Scenario =>
  parseScenarioText(
    JSON.stringify({
      carrierHz: 28e9,
      timing: { subframeS: 1e-3, subframes: 6 },
      band: { subcarriers: 16, spacingHz: 120e3 },
      transmitter: { position: [0, 0, 10], array: { kind: 'upa', rows: 2, columns: 2, dualPolarized: 'slant45' } },
      receiver: { position: [50, 0, 1.5], velocity: [0, 2, 0], array: { kind: 'ula', elements: 2 } },
      paths: [
        { aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 },
        { aodDeg: [20, -5], aoaDeg: [150, 5], delayS: 2.3e-7, powerDb: -97, phaseDeg: 40 },
      ],
      fading: { model: 'gauss-markov' },
      seed: 11,
    }),
  ).scenario;

// A 2-D room with a moving receiver: the paths are traced again every 4 subframes (6 epochs).
const traced = (): Scenario =>
  parseScenarioText(
    JSON.stringify({
      carrierHz: 60e9,
      timing: { subframeS: 1e-3, subframes: 21, geometryUpdateS: 4e-3 },
      band: { subcarriers: 8, spacingHz: 240e3 },
      transmitter: { position: [1, 1], array: { kind: 'ula', elements: 2 } },
      receiver: { position: [6, 3], velocity: [1.5, 0.5], array: { kind: 'ula', elements: 2 } },
      scene: {
        maxReflectionOrder: 1,
        walls: [
          {
            vertices: [
              [0, 0],
              [12, 0],
            ],
            material: 'concrete',
          },
          {
            vertices: [
              [12, 0],
              [12, 8],
            ],
            material: 'glass',
          },
        ],
      },
      fading: { model: 'geometric' },
      seed: 5,
    }),
  ).scenario;

function tensorOf(built: ReturnType<typeof buildScenario>): Float32Array | Float64Array {
  return built.generator.fill(built.generator.allocate(built.plan.timing.subframes), 0, built.plan.timing.subframes);
}

describe('planScenario: every default applied once', () => {
  it('applies the defaults of optional keys and counts ports', () => {
    const plan = planScenario(explicit());
    expect(plan.precision).toBe('complex64');
    expect(plan.bytesPerValue).toBe(8);
    expect(plan.seed).toBe(11);
    expect(planScenario(explicit(), { seed: 4 }).seed).toBe(4);
    expect(plan.transmitter.array).toMatchObject({
      elements: 4,
      portsPerElement: 2,
      ports: 8,
      spacingWavelengths: 0.5,
      wavefront: 'plane',
      orientation: { yawDeg: 0, pitchDeg: 0, rollDeg: 0 },
    });
    expect(plan.users[0]!.array.ports).toBe(2);
    expect(plan.grid).toEqual({ domain: 'frequency', subcarriers: 16, spacingHz: 120e3, beamSquint: false });
    expect(plan.timing).toMatchObject({ symbolAxis: false, stepsPerSubframe: 1, symbolTimesS: [0], geometryUpdateS: 1e-3 });
    // [S, K, Nr, Nt]: 6 x 16 x 2 x 8 complex64.
    expect(plan.tensor).toMatchObject({ name: 'H', shape: [6, 16, 2, 8], valuesPerSubframe: 256, bytesPerSubframe: 2048 });
    expect(plan.polarised).toBe(true);
  });

  it('takes the subcarrier spacing and symbols from the numerology (3GPP TS 38.211 Table 4.2-1 and 4.3.2-1, M)', () => {
    const base = explicit();
    const nr = (mu: number, cyclicPrefix?: 'extended') =>
      planScenario({
        ...base,
        band: { subcarriers: 16 },
        timing: { subframeS: 1e-3, subframes: 2, numerology: mu, ...(cyclicPrefix ? { cyclicPrefix } : {}) },
      });
    // Delta f = 15 kHz 2^mu; 14 symbols per slot (12 with the extended prefix), 2^mu slots per 1 ms subframe.
    expect([0, 1, 2, 3, 4].map((mu) => (nr(mu).grid as { spacingHz: number }).spacingHz)).toEqual([15e3, 30e3, 60e3, 120e3, 240e3]);
    expect([0, 1, 2, 3, 4].map((mu) => nr(mu).timing.stepsPerSubframe)).toEqual([14, 28, 56, 112, 224]);
    expect(nr(2, 'extended').timing.stepsPerSubframe).toBe(48);
    expect(nr(3).tensor.shape).toEqual([2, 112, 16, 2, 8]);
    // Symbol 1 of mu = 0 starts after symbol 0's 2048 + 144 + 16 samples of kappa Tc (kappa = 64, Tc = 1 / (480 kHz * 4096)):
    // 2208 * 64 / 1.96608e9 s = 71.875 us (TS 38.211 clause 5.3.1, M).
    expect(nr(0).timing.symbolTimesS[1]).toBeCloseTo(71.875e-6, 12);
    expect(nr(0).timing.cyclicPrefix).toBe('normal');
  });

  it('is plain data: a JSON round trip builds the same tensor, bit for bit', () => {
    const plan = planScenario(explicit());
    const copy = JSON.parse(JSON.stringify(plan)) as typeof plan;
    expect(copy).toEqual(plan);
    const a = tensorOf(buildScenario(explicit()));
    const b = tensorOf(buildPlan(copy));
    expect(Buffer.from(b.buffer, b.byteOffset, b.byteLength).equals(Buffer.from(a.buffer, a.byteOffset, a.byteLength))).toBe(true);
  });

  it('estimates the output and side arrays from the plan (bytes = S x values x 8 for complex64)', () => {
    const plan = planScenario(explicit());
    expect(outputEstimate(plan, 3)).toEqual({ shape: [3, 16, 2, 8], bytes: 3 * 256 * 8, bytesPerSubframe: 2048 });
    // Per subframe and user: 16 bytes of gains per path, 56 of ground truth per path, 72 per terminal, 1 line-of-sight flag.
    expect(sideArrayBytes(plan, 10, 2)).toBe(10 * (16 * 2 + 56 * 2 + 72 * 2 + 1));
  });
});

describe('building from traced epochs', () => {
  it('gives the same tensor from the epochs of an earlier build, and uses them instead of tracing', () => {
    const plan = planScenario(traced());
    const first = buildPlan(plan);
    const epochs = first.users.map((u) => u.tracedEpochs);
    expect(epochs[0]!.epochTimesS).toHaveLength(6); // updates at 0, 4, ..., 20 ms cover the last step at 20 ms
    const again = buildPlan(structuredClone(plan), { traced: structuredClone(epochs) });
    const a = tensorOf(first),
      b = tensorOf(again);
    expect(Buffer.from(b.buffer, b.byteOffset, b.byteLength).equals(Buffer.from(a.buffer, a.byteOffset, a.byteLength))).toBe(true);
    // Epochs holding only the line of sight give a one-path channel: nothing was traced again.
    const losOnly = epochs.map((e) => ({ ...e!, paths: e!.paths.map((list) => list.filter((p) => p.kind === 'los')) }));
    expect(first.generator.pathCount).toBeGreaterThan(1);
    expect(buildPlan(plan, { traced: losOnly }).generator.pathCount).toBe(1);
  });

  it('refuses epochs that do not match the plan', () => {
    const plan = planScenario(traced());
    const epochs = buildPlan(plan).users.map((u) => u.tracedEpochs!);
    const short = [{ ...epochs[0]!, epochTimesS: epochs[0]!.epochTimesS.slice(0, 2), paths: epochs[0]!.paths.slice(0, 2) }];
    expect(() => buildPlan(plan, { traced: short })).toThrow(
      'TracedTimeline(): traced holds 2 epochs at [0, 0.004] s, this timeline has 6 at [0, 0.004, 0.008, 0.012, 0.016, 0.02] s',
    );
  });
});

describe('dataset layout table', () => {
  it('describes every array generate writes (name, dtype, units, subframe axis first)', () => {
    for (const scenario of [explicit(), traced()]) {
      const built = buildScenario(scenario);
      const L = Math.max(...built.users.map((u) => u.generator.pathCount));
      const count = 3;
      const arrays = sideArrays(built, 1, count, new Float64Array(2 * count * L), [count, L]);
      const planned = new Set(built.plan.arrays.map((a) => a.name));
      for (const a of arrays) {
        const row = datasetArray(a.name);
        expect(row, a.name).toBeDefined();
        expect(planned.has(a.name), a.name).toBe(true);
        expect(a.units, a.name).toBe(row!.units);
        expect(a.dtype, a.name).toBe(row!.dtype);
        expect(isPerSubframe(a.name), a.name).toBe(row!.perSubframe);
        if (row!.perSubframe) expect(a.shape[0], a.name).toBe(count);
        // Axis count: every axis of the row except optional ones that are absent here (no users, no symbols).
        const absent = row!.axes.filter((x) => x === 'U?' || x === 'N?' || (x === 'E?' && !arrays.some((b) => b.name === 'paths/epochTimesS'))).length;
        expect(a.shape.length, a.name).toBe(row!.axes.length - absent);
      }
      // The moving traced scene has an epoch axis in its path table; the explicit one has none.
      expect(arrays.some((a) => a.name === 'paths/epochTimesS')).toBe(scenario.scene !== undefined);
    }
    expect(DATASET_ARRAYS.filter((a) => a.perSubframe).map((a) => a.name)).toEqual([
      'H',
      'h',
      'gains',
      'subframeTimesS',
      ...DATASET_ARRAYS.filter((a) => a.name.startsWith('truth/')).map((a) => a.name),
    ]);
    expect(DATASET_ATTRIBUTES.map((a) => a.name)).toEqual([
      'scenario',
      'pathweaveVersion',
      'seed',
      'subframeRange',
      'subframesTotal',
      'tensorSha256',
      'kernel',
      'formatVersion',
    ]);
  });
});

describe('checkRequest: the one place of the up-front refusals', () => {
  it('refuses an output over the limit, naming the size and the option', () => {
    const plan = planScenario(explicit());
    expect(() => checkRequest(plan, [0, 6], 4096)).toThrow(
      new RequestError(
        'the output would be 12.0 KiB (12288 bytes, shape [6, 16, 2, 8]), over the limit of 4.0 KiB; raise it with --max-bytes 12288 or ask for fewer subframes',
      ),
    );
    expect(() => checkRequest(plan, [2, 9], 2 ** 30)).toThrow('--subframes 2:9 must be a non-empty range within 0:6');
    expect(() => checkRequest(plan, [0, 6], 2 ** 30, { sideArrays: 'per-file' })).not.toThrow();
  });

  it('refuses side arrays beyond a quarter of the memory, with the hint of the command', () => {
    const big = { ...explicit(), timing: { subframeS: 1e-3, subframes: 2 ** 40 } };
    const plan = planScenario(big);
    const side = sideArrayBytes(plan, 2 ** 40, 2);
    expect(side).toBeGreaterThan(totalmem() / 4);
    expect(() => checkRequest(plan, [0, 2 ** 40], Infinity, { sideArrays: 'whole-run' })).toThrow(
      /would need at least .* of memory; generate the run in shards \(--shard\)$/,
    );
    expect(() => checkRequest(plan, [0, 2 ** 40], Infinity, { sideArrays: 'per-file' })).toThrow(
      /of memory for 1099511627776 subframes; generate fewer subframes per file \(--subframes or --shard\)$/,
    );
    expect(() => checkRequest(plan, [0, 2 ** 40], Infinity)).not.toThrow();
  });
});
