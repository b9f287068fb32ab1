/**
 * The SIMD kernels side by side in one process (bench/run.mjs runs it as its "kernels" section):
 * the unfused (wasm-simd128) and fused (wasm-fma128) builds on the dataset's and the taps
 * workload's call shapes (bins, L = 8, M = 1024), output in place in an array from the kernel's
 * own memory, products staged on every call ("fresh") or reused under a stamp ("stamped", as
 * the channel generator calls it when its products do not change). Each figure: the best of
 * `rounds` rounds of calls, the variants alternating round by round.
 *
 * usage: node bench/kernels.mjs [rounds]; prints one JSON line per variant.
 */
import { FMA_KERNEL_PATH, loadWasmKernel, WASM_KERNEL_PATH } from '@pathweave/core';

const rounds = Number(process.argv[2] ?? 15);
const builds = [
  ['wasm-simd128', loadWasmKernel(WASM_KERNEL_PATH)],
  ['wasm-fma128', loadWasmKernel(FMA_KERNEL_PATH)],
].filter(([, k]) => k.kernel !== undefined);
for (const [shape, bins] of [
  ['dataset', 256],
  ['taps', 64],
]) {
  const L = 8,
    M = 1024;
  const per = 2 * bins * M;
  const w = Float64Array.from({ length: 2 * bins * L }, (_, i) => Math.sin(0.37 * i));
  const p = Float64Array.from({ length: 2 * L * M }, (_, i) => Math.cos(0.11 * i));
  const calls = Math.max(4, Math.round(4e7 / (bins * M * L)));
  const variants = builds.flatMap(([name, k]) => {
    const out = k.allocate(4 * per, Float32Array); // four outputs in turn, as a block of subframes
    out.fill(0);
    return [undefined, 1].map((stamp) => ({ name, stamp, run: (i) => k.kernel(out, (i % 4) * per, w, p, bins, L, M, stamp), best: Infinity }));
  });
  for (let r = 0; r < rounds; r++)
    for (const v of variants) {
      const t0 = performance.now();
      for (let i = 0; i < calls; i++) v.run(i);
      v.best = Math.min(v.best, (performance.now() - t0) / 1000 / calls);
    }
  for (const v of variants)
    console.log(
      JSON.stringify({
        shape,
        bins,
        L,
        M,
        kernel: v.name,
        products: v.stamp === undefined ? 'fresh' : 'stamped',
        secondsPerCall: v.best,
        coefficientsPerSecond: (bins * M) / v.best,
      }),
    );
}
