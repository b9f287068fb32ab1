/**
 * SubframeFiller: tensors in memory filled by worker threads into one shared array. Its bytes
 * and gains must be those of `fillBlock` over the same range on one thread, for any worker
 * count (docs/conventions.md, Reproducibility: "the same tensor bytes ... with any worker
 * count"); the values themselves are held to numpy and to the physics by the other tests
 * (channel-numpy.test.ts, transpose-physics.test.ts), which use the same fillBlock.
 *
 * Build first (`npx tsc -b`): the workers run dist/.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { allocateSharedTensor, buildScenario, fillBlock, maxPathCount, parseScenarioText, SubframeFiller, type BuiltScenario } from '@pathweave/io';
import { FMA_KERNEL_NAME, PLAIN_KERNEL_NAME, WASM_KERNEL_NAME } from '@pathweave/core';
import { ROOT } from './support/run.js';

const example = (name: string, change: (s: Record<string, any>) => Record<string, any> = (s) => s): BuiltScenario => {
  const scenario = change(JSON.parse(readFileSync(join(ROOT, 'examples', name), 'utf8')) as Record<string, any>);
  return buildScenario(parseScenarioText(JSON.stringify(scenario)).scenario);
};

const CASES: Array<[string, () => BuiltScenario]> = [
  ['street corner (traced, the receiver walking), complex64', () => example('street-corner-28ghz.json')],
  ['street corner, complex128', () => example('street-corner-28ghz.json', (s) => ({ ...s, precision: 'complex128' }))],
  ['several users', () => example('street-corner-users-28ghz.json')],
];

/** One thread, one fillBlock call over the range: the reference. */
function reference(built: BuiltScenario, first: number, count: number): { tensor: Float32Array | Float64Array; gains: Float64Array } {
  const Type = built.plan.precision === 'complex64' ? Float32Array : Float64Array;
  const tensor = new Type(2 * count * built.valuesPerSubframe);
  const N = built.users[0]!.generator.stepsPerSubframe;
  const gains = new Float64Array(2 * count * built.users.length * N * maxPathCount(built));
  fillBlock(built, tensor, first, count, gains);
  return { tensor, gains };
}

const bytes = (a: Float32Array | Float64Array): Uint8Array => new Uint8Array(a.buffer, a.byteOffset, a.byteLength);

describe('SubframeFiller', () => {
  const open: SubframeFiller[] = [];
  afterAll(async () => {
    await Promise.all(open.map((f) => f.close()));
  });

  for (const [name, make] of CASES) {
    it(`${name}: workers 1, 2 and 3 give fillBlock's bytes and gains, for the whole run and for a range`, async () => {
      const built = make();
      const S = built.plan.timing.subframes;
      for (const [first, count] of [
        [0, S],
        [7, Math.min(37, S - 7)],
      ] as const) {
        const want = reference(built, first, count);
        for (const workers of [1, 2, 3]) {
          const filler = new SubframeFiller(built, { workers });
          open.push(filler);
          const out = allocateSharedTensor(built, count);
          const gains = new Float64Array(want.gains.length);
          const { kernel } = await filler.fill(out, first, count, gains);
          expect([FMA_KERNEL_NAME, WASM_KERNEL_NAME, PLAIN_KERNEL_NAME]).toContain(kernel);
          expect(Buffer.compare(bytes(out), bytes(want.tensor)), `${workers} workers, [${first}, ${first + count})`).toBe(0);
          expect(Buffer.compare(bytes(gains), bytes(want.gains)), `gains, ${workers} workers`).toBe(0);
        }
      }
    });
  }

  it('fills again with the same workers: a second range into the same array gives its own reference bytes', async () => {
    const built = make0();
    const filler = new SubframeFiller(built, { workers: 2 });
    open.push(filler);
    const out = allocateSharedTensor(built, 20);
    await filler.fill(out, 0, 20);
    await filler.fill(out, 100, 20);
    expect(Buffer.compare(bytes(out), bytes(reference(built, 100, 20).tensor))).toBe(0);
  });

  it('refuses an array that workers cannot share, a range outside the run and a short array, naming what is wrong', async () => {
    const built = make0();
    const S = built.plan.timing.subframes;
    const filler = new SubframeFiller(built, { workers: 2 });
    open.push(filler);
    await expect(filler.fill(new Float32Array(2 * 4 * built.valuesPerSubframe), 0, 4)).rejects.toThrow(
      'SubframeFiller.fill(): out must lie over a SharedArrayBuffer for 2 workers (allocate it with allocateSharedTensor), got one over an ArrayBuffer',
    );
    await expect(filler.fill(allocateSharedTensor(built, 4), S - 2, 4)).rejects.toThrow(
      `SubframeFiller.fill(): count must be an integer in [1, 2] (subframes from ${S - 2} to the scenario's end), got 4`,
    );
    await expect(filler.fill(allocateSharedTensor(built, 4), -1, 4)).rejects.toThrow(`first must be an integer in [0, ${S - 1}]`);
    await expect(filler.fill(allocateSharedTensor(built, 2), 0, 4)).rejects.toThrow(
      `SubframeFiller.fill(): out holds ${2 * 2 * built.valuesPerSubframe} values, 4 subframes need ${2 * 4 * built.valuesPerSubframe}`,
    );
    await expect(filler.fill(new Float64Array(2 * 4 * built.valuesPerSubframe), 0, 4)).rejects.toThrow(
      'out must be a Float32Array for complex64, got Float64Array',
    );
    expect(() => new SubframeFiller(built, { workers: 0 })).toThrow('SubframeFiller: options.workers must be an integer >= 1, got 0');
  });
});

function make0(): BuiltScenario {
  return CASES[0]![1]();
}
