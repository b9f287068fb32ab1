// WebAssembly SIMD (128-bit) kernels of the assembler's inner loop, compiled by AssemblyScript
// (scripts/setup.mjs builds them into packages/core/dist/kernels/accumulate.wasm).
//
// Layouts in linear memory (byte addresses passed by the caller), row-major, complex interleaved:
//   out [bins, M]   complex, written whole (no accumulation into what was there)
//   w   [bins, L]   complex weights w_(k,l)
//   p   [L, M]      complex products P_(l,m) = (re, im)
//   q   [L, M]      the same products turned by +90 degrees: (-im, re)
// out[k, m] = sum_l w[k, l] P[l, m] = sum_l (Re w) P[l, m] + (Im w) Q[l, m], evaluated for every
// lane in the same order (l ascending, the Re term before the Im term), so a coefficient's bits
// never depend on which bins or columns a call covers.
// Q is prepared once per call by the caller so the inner loop needs no shuffle (Node 20 has no
// fused multiply-add without a flag: one multiply and one add per lane and term).

/** f32 kernel: columns [0, M) in tiles of `tile` complex values (a multiple of 8) so P and Q stay in L1. */
export function accumulateF32(out: usize, w: usize, p: usize, q: usize, bins: i32, L: i32, M: i32, tile: i32): void {
  const rowBytes = <usize>M << 3;
  const M8 = M & ~7;
  for (let m0 = 0; m0 < M8; m0 += tile) {
    const m1 = min(m0 + tile, M8);
    for (let k = 0; k < bins; k++) {
      const wk = w + (<usize>(k * L) << 3);
      const ok = out + <usize>k * rowBytes;
      for (let m = m0; m < m1; m += 8) {
        const col = <usize>m << 3;
        let a0 = f32x4.splat(0), a1 = f32x4.splat(0), a2 = f32x4.splat(0), a3 = f32x4.splat(0);
        let pp = p + col, qq = q + col, wp = wk;
        for (let l = 0; l < L; l++) {
          const wr = v128.load32_splat(wp);
          const wi = v128.load32_splat(wp, 4);
          a0 = f32x4.add(f32x4.add(a0, f32x4.mul(wr, v128.load(pp))), f32x4.mul(wi, v128.load(qq)));
          a1 = f32x4.add(f32x4.add(a1, f32x4.mul(wr, v128.load(pp, 16))), f32x4.mul(wi, v128.load(qq, 16)));
          a2 = f32x4.add(f32x4.add(a2, f32x4.mul(wr, v128.load(pp, 32))), f32x4.mul(wi, v128.load(qq, 32)));
          a3 = f32x4.add(f32x4.add(a3, f32x4.mul(wr, v128.load(pp, 48))), f32x4.mul(wi, v128.load(qq, 48)));
          pp += rowBytes;
          qq += rowBytes;
          wp += 8;
        }
        v128.store(ok + col, a0);
        v128.store(ok + col, a1, 16);
        v128.store(ok + col, a2, 32);
        v128.store(ok + col, a3, 48);
      }
    }
  }
  if (M8 == M) return;
  // Tail columns: pairs of complex values, then a last odd one, lane for lane the same sums.
  const M2 = M & ~1;
  for (let k = 0; k < bins; k++) {
    const wk = w + (<usize>(k * L) << 3);
    const ok = out + <usize>k * rowBytes;
    for (let m = M8; m < M2; m += 2) {
      const col = <usize>m << 3;
      let a0 = f32x4.splat(0);
      let pp = p + col, qq = q + col, wp = wk;
      for (let l = 0; l < L; l++) {
        a0 = f32x4.add(f32x4.add(a0, f32x4.mul(v128.load32_splat(wp), v128.load(pp))), f32x4.mul(v128.load32_splat(wp, 4), v128.load(qq)));
        pp += rowBytes;
        qq += rowBytes;
        wp += 8;
      }
      v128.store(ok + col, a0);
    }
    if (M2 != M) {
      const col = <usize>M2 << 3;
      let re: f32 = 0, im: f32 = 0;
      let pp = p + col, qq = q + col, wp = wk;
      for (let l = 0; l < L; l++) {
        const wr = load<f32>(wp), wi = load<f32>(wp, 4);
        re = re + wr * load<f32>(pp) + wi * load<f32>(qq);
        im = im + wr * load<f32>(pp, 4) + wi * load<f32>(qq, 4);
        pp += rowBytes;
        qq += rowBytes;
        wp += 8;
      }
      store<f32>(ok + col, re);
      store<f32>(ok + col, im, 4);
    }
  }
}

/** f64 kernel (complex128 output): one complex value per v128, columns in tiles of `tile` (a multiple of 4). */
export function accumulateF64(out: usize, w: usize, p: usize, q: usize, bins: i32, L: i32, M: i32, tile: i32): void {
  const rowBytes = <usize>M << 4;
  const M4 = M & ~3;
  for (let m0 = 0; m0 < M4; m0 += tile) {
    const m1 = min(m0 + tile, M4);
    for (let k = 0; k < bins; k++) {
      const wk = w + (<usize>(k * L) << 4);
      const ok = out + <usize>k * rowBytes;
      for (let m = m0; m < m1; m += 4) {
        const col = <usize>m << 4;
        let a0 = f64x2.splat(0), a1 = f64x2.splat(0), a2 = f64x2.splat(0), a3 = f64x2.splat(0);
        let pp = p + col, qq = q + col, wp = wk;
        for (let l = 0; l < L; l++) {
          const wr = v128.load64_splat(wp);
          const wi = v128.load64_splat(wp, 8);
          a0 = f64x2.add(f64x2.add(a0, f64x2.mul(wr, v128.load(pp))), f64x2.mul(wi, v128.load(qq)));
          a1 = f64x2.add(f64x2.add(a1, f64x2.mul(wr, v128.load(pp, 16))), f64x2.mul(wi, v128.load(qq, 16)));
          a2 = f64x2.add(f64x2.add(a2, f64x2.mul(wr, v128.load(pp, 32))), f64x2.mul(wi, v128.load(qq, 32)));
          a3 = f64x2.add(f64x2.add(a3, f64x2.mul(wr, v128.load(pp, 48))), f64x2.mul(wi, v128.load(qq, 48)));
          pp += rowBytes;
          qq += rowBytes;
          wp += 16;
        }
        v128.store(ok + col, a0);
        v128.store(ok + col, a1, 16);
        v128.store(ok + col, a2, 32);
        v128.store(ok + col, a3, 48);
      }
    }
  }
  if (M4 == M) return;
  for (let k = 0; k < bins; k++) {
    const wk = w + (<usize>(k * L) << 4);
    const ok = out + <usize>k * rowBytes;
    for (let m = M4; m < M; m++) {
      const col = <usize>m << 4;
      let a0 = f64x2.splat(0);
      let pp = p + col, qq = q + col, wp = wk;
      for (let l = 0; l < L; l++) {
        a0 = f64x2.add(f64x2.add(a0, f64x2.mul(v128.load64_splat(wp), v128.load(pp))), f64x2.mul(v128.load64_splat(wp, 8), v128.load(qq)));
        pp += rowBytes;
        qq += rowBytes;
        wp += 16;
      }
      v128.store(ok + col, a0);
    }
  }
}
