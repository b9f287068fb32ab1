/**
 * Filling one block of subframes for every user: the piece of `generate` that worker threads
 * run too, kept apart from the file sinks so a worker loads only the scenario builder and the
 * assembler.
 *
 * Layouts: out [n, (U,) (symbols,) K or count, Nr, Nt] complex interleaved (users after S);
 * gains [n, (U,) (symbols,) Lmax] complex128, zero-padded to the largest path count.
 */
import type { BuiltScenario } from '../../scenario/build.js';

/**
 * Largest path count over the users (the L axis of gains and tables).
 * @example maxPathCount(buildScenario(scenario)) // 3 for a three-path scenario
 */
export function maxPathCount(built: BuiltScenario): number {
  return Math.max(...built.users.map((u) => u.generator.pathCount));
}

/**
 * Fill subframes [first, first + n) of every user into `out` (packed, users after S) and their
 * gains into `gains` ([n, (U,) (symbols,) Lmax], zero-padded).
 * @example fillBlock(built, built.generator.allocate(2), 0, 2) // subframes 0 and 1 of every user
 */
export function fillBlock(built: BuiltScenario, out: Float32Array | Float64Array, first: number, n: number, gains?: Float64Array): void {
  const userValues = built.users[0]!.generator.valuesPerSubframe;
  const stride = 2 * built.valuesPerSubframe;
  const Lmax = maxPathCount(built);
  const U = built.users.length;
  built.users.forEach((user, u) => {
    const g = user.generator;
    const L = g.pathCount;
    const N = g.stepsPerSubframe;
    const local = gains === undefined ? undefined : new Float64Array(2 * n * N * L);
    g.fill(out, first, n, { offset: 2 * u * userValues, stride, ...(local !== undefined ? { gainsOut: local } : {}) });
    if (gains !== undefined && local !== undefined) {
      for (let s = 0; s < n; s++) {
        for (let i = 0; i < N; i++) {
          const dst = 2 * (((s * U + u) * N + i) * Lmax);
          gains.set(local.subarray(2 * (s * N + i) * L, 2 * (s * N + i + 1) * L), dst);
        }
      }
    }
  });
}
