import { describe, expect, it } from 'vitest';
import { BlockedStreams, RandomStream, RANDOM_BLOCK_STEPS, hashKey } from '../src/random.js';

describe('RandomStream', () => {
  it('gives the same numbers for the same key and different ones for another key, seed or block', () => {
    const draw = (seed: number, key: string, block = 0): number[] => {
      const s = new RandomStream(seed, key, block);
      return Array.from({ length: 8 }, () => s.nextUint32());
    };
    expect(draw(7, 'los')).toEqual(draw(7, 'los'));
    expect(draw(7, 'los')).not.toEqual(draw(8, 'los'));
    expect(draw(7, 'los')).not.toEqual(draw(7, 'R:walls[0]'));
    expect(draw(7, 'los')).not.toEqual(draw(7, 'los', 1));
    // seeds that differ only above 2^32 still differ
    expect(draw(2 ** 40, 'x')).not.toEqual(draw(2 ** 40 + 2 ** 33, 'x'));
  });

  it('refuses seeds that are not integers below 2^53', () => {
    expect(() => new RandomStream(2 ** 53, 'a')).toThrow('RandomStream(): seed must be an integer in [0, 2^53), got 9007199254740992');
    expect(() => new RandomStream(1.5, 'a')).toThrow(RangeError);
  });

  it('draws uniforms with mean 1/2 and variance 1/12 and complex normals of unit power', () => {
    const s = new RandomStream(1, 'stats');
    const n = 200_000;
    let sum = 0, sum2 = 0, power = 0, re = 0;
    const z = new Float64Array(2);
    for (let i = 0; i < n; i++) {
      const u = s.nextUniform();
      expect(u > 0 && u < 1).toBe(true);
      sum += u;
      sum2 += u * u;
      s.nextComplexNormal(z, 0);
      power += z[0]! ** 2 + z[1]! ** 2;
      re += z[0]!;
    }
    // Uniform(0,1): mean 1/2, variance 1/12; the sample mean has sd sqrt(1/12/n) (textbook).
    expect(Math.abs(sum / n - 0.5)).toBeLessThan(5 * Math.sqrt(1 / 12 / n));
    expect(Math.abs(sum2 / n - sum ** 2 / n ** 2 - 1 / 12)).toBeLessThan(5 * Math.sqrt(1 / 180 / n));
    // CN(0,1): |z|^2 is exponential with mean 1 and sd 1, so the mean has sd 1/sqrt(n).
    expect(Math.abs(power / n - 1)).toBeLessThan(5 / Math.sqrt(n));
    // Re z ~ N(0, 1/2): the mean has sd sqrt(1/(2n)).
    expect(Math.abs(re / n)).toBeLessThan(5 * Math.sqrt(0.5 / n));
  });

  it('hashKey is stable and separates near keys', () => {
    expect(hashKey('paths[0]')).toEqual(hashKey('paths[0]'));
    expect(hashKey('paths[0]')).not.toEqual(hashKey('paths[1]'));
  });
});

describe('BlockedStreams', () => {
  it('serves a step the same numbers whether reached in order or directly', () => {
    const skip = (s: RandomStream): void => void s.nextUint32();
    const sequential = new BlockedStreams(3, 'p', skip);
    const values: number[] = [];
    for (let step = 0; step < 3 * RANDOM_BLOCK_STEPS; step++) values.push(sequential.at(step).nextUint32());
    for (const step of [0, 1, RANDOM_BLOCK_STEPS - 1, RANDOM_BLOCK_STEPS, 2 * RANDOM_BLOCK_STEPS + 17]) {
      const direct = new BlockedStreams(3, 'p', skip);
      expect(direct.at(step).nextUint32()).toBe(values[step]);
    }
  });
});
