// WebAssembly SIMD (128-bit) kernels of the assembler's inner loop, compiled by AssemblyScript
// (scripts/setup.mjs builds them into packages/core/dist/kernels/accumulate.wasm).
//
// Layouts in linear memory (byte addresses passed by the caller), row-major, complex interleaved:
//   out [bins, M]   complex, written whole (no accumulation into what was there)
//   w   [bins, L]   complex weights w_(k,l)
//   p   [L, M]      complex products P_(l,m) = (re, im)
//   q   [L, M]      the same products turned by +90 degrees: (-im, re)
// out[k, m] = sum_l w[k, l] P[l, m] = sum_l (Re w) P[l, m] + (Im w) Q[l, m].
// Every lane is evaluated with the same formula whatever code path (register tile, tail column,
// odd last bin) covers it, in the same order (l ascending; float32: acc + ((Re w) P + (Im w) Q),
// float64: (acc + (Re w) P) + (Im w) Q), so a coefficient's bits never depend on which bins or
// columns a call covers. IEEE arithmetic is exact per operation, so a SIMD lane and the scalar
// tail give the same bits for the same formula.
// Q is prepared once per call (prepareF32/turnF64) so the inner loop needs no shuffle.
//
// The same source is compiled twice (scripts/setup.mjs): accumulate.wasm with `--enable simd`
// (one multiply and one add per lane and term, the formulas above) and accumulate-fma.wasm with
// `--enable simd,relaxed-simd`, where ASC_FEATURE_RELAXED_SIMD is true and every term is two
// multiply-adds in the same order, acc = madd(Im w, Q, madd(Re w, P, acc)), l ascending, in every
// code path (the last, zero-padded column group too), so the bits again never depend on the
// path. Its float32 kernel reads P in a split layout of its own (splitF32: real parts and
// imaginary parts of four columns in separate lanes) and needs no Q. Fused and unfused results differ in the last bits: the builds are kernels of their own
// names, and the fused one is used only where the runtime fuses (kernels/wasm.ts probes it).

/** One f64 term of a complex value: (acc + (Re w) P) + (Im w) Q, or two multiply-adds in the fused build. */
// @ts-ignore: decorator
@inline function term64(acc: v128, wr: v128, x: v128, wi: v128, y: v128): v128 {
  if (ASC_FEATURE_RELAXED_SIMD) return f64x2.relaxed_madd(wi, y, f64x2.relaxed_madd(wr, x, acc));
  return f64x2.add(f64x2.add(acc, f64x2.mul(wr, x)), f64x2.mul(wi, y));
}

/** 1 in the fused build (relaxed-SIMD multiply-add), 0 in the plain one. */
export function fusedBuild(): i32 {
  return ASC_FEATURE_RELAXED_SIMD ? 1 : 0;
}

/**
 * Bytes between rows of P and Q in the unfused f32 kernel: M complex float32 values, then one
 * cache line more (two when that lands on a multiple of 4 KiB), for the reason splitRowBytes
 * gives. Mirrored by plainRowBytes in src/kernels/wasm.ts.
 */
// @ts-ignore: decorator
@inline function plainRowBytes(M: i32): usize {
  return pastPageMultiple(<usize>M << 3);
}

/** A row of `packed` bytes plus one cache line, or two when one would end on a multiple of 4 KiB. */
// @ts-ignore: decorator
@inline function pastPageMultiple(packed: usize): usize {
  return ((packed + 64) & 4095) == 0 ? packed + 128 : packed + 64;
}

/**
 * float64 products [L, M] complex at `src` to float32 P and Q = P turned by +90 degrees (-im, re),
 * rows plainRowBytes(M) apart, rounding to nearest like a Float32Array store.
 */
export function prepareF32(p: usize, q: usize, src: usize, L: i32, M: i32): void {
  const rowBytes = plainRowBytes(M);
  const M2 = M & ~1;
  for (let l = 0; l < L; l++) {
    const sl = src + (<usize>(l * M) << 4);
    const pl = p + <usize>l * rowBytes, ql = q + <usize>l * rowBytes;
    for (let i = 0; i < M2; i += 2) {
      const s = sl + (<usize>i << 4);
      const a = f32x4.demote_f64x2_zero(v128.load(s));
      const b = f32x4.demote_f64x2_zero(v128.load(s, 16));
      const pv = v128.shuffle<f32>(a, b, 0, 1, 4, 5); // (re0, im0, re1, im1)
      const qv = v128.shuffle<f32>(f32x4.neg(pv), pv, 1, 4, 3, 6); // (-im0, re0, -im1, re1)
      v128.store(pl + (<usize>i << 3), pv);
      v128.store(ql + (<usize>i << 3), qv);
    }
    if (M2 != M) {
      const s = sl + (<usize>M2 << 4);
      const re = <f32>load<f64>(s), im = <f32>load<f64>(s, 8);
      store<f32>(pl + (<usize>M2 << 3), re);
      store<f32>(pl + (<usize>M2 << 3), im, 4);
      store<f32>(ql + (<usize>M2 << 3), -im);
      store<f32>(ql + (<usize>M2 << 3), re, 4);
    }
  }
}

/** float64 values [n] at `src` rounded to float32 at `dst` (the weights of the f32 kernel). */
export function roundF32(dst: usize, src: usize, n: i32): void {
  const n4 = n & ~3;
  for (let i = 0; i < n4; i += 4) {
    const s = src + (<usize>i << 3);
    const a = f32x4.demote_f64x2_zero(v128.load(s));
    const b = f32x4.demote_f64x2_zero(v128.load(s, 16));
    v128.store(dst + (<usize>i << 2), v128.shuffle<f32>(a, b, 0, 1, 4, 5));
  }
  for (let i = n4; i < n; i++) store<f32>(dst + (<usize>i << 2), <f32>load<f64>(src + (<usize>i << 3)));
}

/** float64 complex products [n] at `p` turned by +90 degrees into `q`: (-im, re). */
export function turnF64(q: usize, p: usize, n: i32): void {
  for (let i = 0; i < n; i++) {
    const v = v128.load(p + (<usize>i << 4));
    v128.store(q + (<usize>i << 4), v128.shuffle<f64>(f64x2.neg(v), v, 1, 2));
  }
}

/**
 * f32 kernel: columns [0, M) in tiles of `tile` complex values (a multiple of 4) so P and Q stay
 * in L1; within a tile, bins two at a time (each load of P and Q serves both) and four complex
 * columns per register block: 4 accumulators, 4 broadcast weights and the loads fit the 16
 * vector registers V8 allocates on x64 without spilling (2 bins x 8 columns spilled; measured).
 */
export function accumulateF32(out: usize, w: usize, p: usize, q: usize, bins: i32, L: i32, M: i32, tile: i32): void {
  if (ASC_FEATURE_RELAXED_SIMD) {
    fusedF32(out, w, p, bins, L, M, tile);
    return;
  }
  const rowBytes = <usize>M << 3;
  const pRow = plainRowBytes(M);
  const wRow = <usize>L << 3;
  const M4 = M & ~3;
  const bins2 = bins & ~1;
  for (let m0 = 0; m0 < M4; m0 += tile) {
    const m1 = min(m0 + tile, M4);
    for (let k = 0; k < bins2; k += 2) {
      const wk = w + <usize>k * wRow;
      const ok = out + <usize>k * rowBytes;
      for (let m = m0; m < m1; m += 4) {
        const col = <usize>m << 3;
        let a0 = f32x4.splat(0), a1 = f32x4.splat(0);
        let b0 = f32x4.splat(0), b1 = f32x4.splat(0);
        let pp = p + col, qq = q + col, wp = wk;
        for (let l = 0; l < L; l++) {
          const wr = v128.load32_splat(wp), wi = v128.load32_splat(wp, 4);
          const vr = v128.load32_splat(wp + wRow), vi = v128.load32_splat(wp + wRow, 4);
          let x = v128.load(pp), y = v128.load(qq);
          a0 = f32x4.add(a0, f32x4.add(f32x4.mul(wr, x), f32x4.mul(wi, y)));
          b0 = f32x4.add(b0, f32x4.add(f32x4.mul(vr, x), f32x4.mul(vi, y)));
          x = v128.load(pp, 16);
          y = v128.load(qq, 16);
          a1 = f32x4.add(a1, f32x4.add(f32x4.mul(wr, x), f32x4.mul(wi, y)));
          b1 = f32x4.add(b1, f32x4.add(f32x4.mul(vr, x), f32x4.mul(vi, y)));
          pp += pRow;
          qq += pRow;
          wp += 8;
        }
        const o = ok + col;
        v128.store(o, a0);
        v128.store(o, a1, 16);
        const o2 = o + rowBytes;
        v128.store(o2, b0);
        v128.store(o2, b1, 16);
      }
    }
    if (bins2 != bins) {
      // The odd last bin: one bin per register block, the same formula per lane.
      const wk = w + <usize>bins2 * wRow;
      const ok = out + <usize>bins2 * rowBytes;
      for (let m = m0; m < m1; m += 4) {
        const col = <usize>m << 3;
        let a0 = f32x4.splat(0), a1 = f32x4.splat(0);
        let pp = p + col, qq = q + col, wp = wk;
        for (let l = 0; l < L; l++) {
          const wr = v128.load32_splat(wp), wi = v128.load32_splat(wp, 4);
          a0 = f32x4.add(a0, f32x4.add(f32x4.mul(wr, v128.load(pp)), f32x4.mul(wi, v128.load(qq))));
          a1 = f32x4.add(a1, f32x4.add(f32x4.mul(wr, v128.load(pp, 16)), f32x4.mul(wi, v128.load(qq, 16))));
          pp += pRow;
          qq += pRow;
          wp += 8;
        }
        v128.store(ok + col, a0);
        v128.store(ok + col, a1, 16);
      }
    }
  }
  if (M4 == M) return;
  // Tail columns: a pair of complex values, then a last odd one, lane for lane the same formula.
  const M2 = M & ~1;
  for (let k = 0; k < bins; k++) {
    const wk = w + <usize>k * wRow;
    const ok = out + <usize>k * rowBytes;
    for (let m = M4; m < M2; m += 2) {
      const col = <usize>m << 3;
      let a0 = f32x4.splat(0);
      let pp = p + col, qq = q + col, wp = wk;
      for (let l = 0; l < L; l++) {
        a0 = f32x4.add(a0, f32x4.add(f32x4.mul(v128.load32_splat(wp), v128.load(pp)), f32x4.mul(v128.load32_splat(wp, 4), v128.load(qq))));
        pp += pRow;
        qq += pRow;
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
        re = re + (wr * load<f32>(pp) + wi * load<f32>(qq));
        im = im + (wr * load<f32>(pp, 4) + wi * load<f32>(qq, 4));
        pp += pRow;
        qq += pRow;
        wp += 8;
      }
      store<f32>(ok + col, re);
      store<f32>(ok + col, im, 4);
    }
  }
}

/** Fused f32 real parts of four columns: nmadd(Im w, Im P, madd(Re w, Re P, acc)), the same value as madd(-Im w, Im P, .) (negation is exact). */
// @ts-ignore: decorator
@inline function fmaRe(acc: v128, wr: v128, wi: v128, xr: v128, xi: v128): v128 {
  return f32x4.relaxed_nmadd(wi, xi, f32x4.relaxed_madd(wr, xr, acc));
}

/** Fused f32 imaginary parts of four columns: madd(Im w, Re P, madd(Re w, Im P, acc)). */
// @ts-ignore: decorator
@inline function fmaIm(acc: v128, wr: v128, wi: v128, xr: v128, xi: v128): v128 {
  return f32x4.relaxed_madd(wi, xr, f32x4.relaxed_madd(wr, xi, acc));
}

/** Four complex values from their real and imaginary parts, interleaved and stored at `o` (the first `n` of them, n in 1..4). */
// @ts-ignore: decorator
@inline function storeGroup(o: usize, re: v128, im: v128, n: i32): void {
  const lo = v128.shuffle<f32>(re, im, 0, 4, 1, 5);
  if (n >= 2) v128.store(o, lo);
  else v128.store64_lane(o, lo, 0);
  if (n == 4) v128.store(o, v128.shuffle<f32>(re, im, 2, 6, 3, 7), 16);
  else if (n == 3) v128.store64_lane(o, v128.shuffle<f32>(re, im, 2, 6, 3, 7), 0, 16);
}

/**
 * Bytes between rows of P in the split layout: M rounded up to four columns (32 bytes a group),
 * then one cache line more (two when that lands on a multiple of 4 KiB). With rows a multiple
 * of 4 KiB apart (M = 1024: 8 KiB) all L rows of a column group fall in one L1 set and the
 * kernel ran about 1.1 times slower on the bench machine; the padding is never read.
 * Mirrored by splitRowBytes in src/kernels/wasm.ts.
 */
// @ts-ignore: decorator
@inline function splitRowBytes(M: i32): usize {
  return pastPageMultiple((<usize>(M + 3) & ~3) << 3);
}

/**
 * Fused build, float64 complex products [L, M] at `src` to the f32 kernel's split layout at `p`:
 * rows splitRowBytes(M) apart, in groups of four columns stored as their four real parts then
 * their four imaginary parts (32 bytes), the missing columns of a last partial group zero;
 * rounded to nearest like a Float32Array store.
 */
export function splitF32(p: usize, src: usize, L: i32, M: i32): void {
  const M4 = M & ~3;
  const rowBytes = splitRowBytes(M);
  for (let l = 0; l < L; l++) {
    const s = src + (<usize>(l * M) << 4);
    const d = p + <usize>l * rowBytes;
    for (let m = 0; m < M4; m += 4) {
      const a = s + (<usize>m << 4);
      const ab = v128.shuffle<f32>(f32x4.demote_f64x2_zero(v128.load(a)), f32x4.demote_f64x2_zero(v128.load(a, 16)), 0, 1, 4, 5);
      const cd = v128.shuffle<f32>(f32x4.demote_f64x2_zero(v128.load(a, 32)), f32x4.demote_f64x2_zero(v128.load(a, 48)), 0, 1, 4, 5);
      v128.store(d + (<usize>m << 3), v128.shuffle<f32>(ab, cd, 0, 2, 4, 6));
      v128.store(d + (<usize>m << 3), v128.shuffle<f32>(ab, cd, 1, 3, 5, 7), 16);
    }
    if (M4 != M) {
      const g = d + (<usize>M4 << 3);
      v128.store(g, f32x4.splat(0));
      v128.store(g, f32x4.splat(0), 16);
      for (let m = M4; m < M; m++) {
        store<f32>(g + (<usize>(m - M4) << 2), <f32>load<f64>(s + (<usize>m << 4)));
        store<f32>(g + (<usize>(m - M4) << 2), <f32>load<f64>(s + (<usize>m << 4), 8), 16);
      }
    }
  }
}

/**
 * Fused build's f32 kernel (reached from accumulateF32): weights as (Re, Im) float32 pairs
 * (roundF32), P in the split layout of splitF32, so real and imaginary parts sit in lanes of
 * their own and the inner loop has no shuffle at all (the output is interleaved once per
 * register block). Register block: 3 bins x 4 columns, 6 accumulators; larger blocks (4 or
 * more bins, or 2 x 8 columns) measured slower on the bench machine (V8 keeps fewer values in
 * registers than x64 has), 3 x 4 was 1.2-1.4 times the previous interleaved 2 x 8 block. Bins
 * left over (1 or 2) and the last, zero-padded column group use the same two multiply-adds per
 * lane in the same order (l ascending), so a coefficient's bits never depend on the code path,
 * and they equal the previous layout's bit for bit.
 */
function fusedF32(out: usize, w: usize, p: usize, bins: i32, L: i32, M: i32, tile: i32): void {
  const rowBytes = <usize>M << 3;
  const pRow = splitRowBytes(M);
  const wRow = <usize>L << 3;
  const M4 = M & ~3;
  const bins3 = bins - (bins % 3);
  for (let m0 = 0; m0 < M4; m0 += tile) {
    const m1 = min(m0 + tile, M4);
    for (let k = 0; k < bins3; k += 3) {
      const wk = w + <usize>k * wRow;
      const ok = out + <usize>k * rowBytes;
      for (let m = m0; m < m1; m += 4) {
        const col = <usize>m << 3;
        let ar = f32x4.splat(0), ai = f32x4.splat(0), br = f32x4.splat(0), bi = f32x4.splat(0), cr = f32x4.splat(0), ci = f32x4.splat(0);
        let pp = p + col, wp = wk;
        for (let l = 0; l < L; l++) {
          const xr = v128.load(pp), xi = v128.load(pp, 16);
          let wr = v128.load32_splat(wp), wi = v128.load32_splat(wp, 4);
          ar = fmaRe(ar, wr, wi, xr, xi);
          ai = fmaIm(ai, wr, wi, xr, xi);
          wr = v128.load32_splat(wp + wRow);
          wi = v128.load32_splat(wp + wRow, 4);
          br = fmaRe(br, wr, wi, xr, xi);
          bi = fmaIm(bi, wr, wi, xr, xi);
          wr = v128.load32_splat(wp + 2 * wRow);
          wi = v128.load32_splat(wp + 2 * wRow, 4);
          cr = fmaRe(cr, wr, wi, xr, xi);
          ci = fmaIm(ci, wr, wi, xr, xi);
          pp += pRow;
          wp += 8;
        }
        const o = ok + col;
        storeGroup(o, ar, ai, 4);
        storeGroup(o + rowBytes, br, bi, 4);
        storeGroup(o + 2 * rowBytes, cr, ci, 4);
      }
    }
    if (bins3 != bins) fusedRows(out, w, p, bins3, bins, L, M, m0, m1);
  }
  // The last, partly filled column group (zero-padded in P), one bin at a time.
  if (M4 != M) fusedRows(out, w, p, 0, bins, L, M, M4, M);
}

/** Bins [k0, k1) over columns [m0, m1), one bin at a time (the leftover bins and the last column group of fusedF32). */
function fusedRows(out: usize, w: usize, p: usize, k0: i32, k1: i32, L: i32, M: i32, m0: i32, m1: i32): void {
  const rowBytes = <usize>M << 3;
  const pRow = splitRowBytes(M);
  const wRow = <usize>L << 3;
  for (let k = k0; k < k1; k++) {
    const wk = w + <usize>k * wRow;
    const ok = out + <usize>k * rowBytes;
    for (let m = m0; m < m1; m += 4) {
      const col = <usize>m << 3;
      let ar = f32x4.splat(0), ai = f32x4.splat(0);
      let pp = p + col, wp = wk;
      for (let l = 0; l < L; l++) {
        const xr = v128.load(pp), xi = v128.load(pp, 16);
        const wr = v128.load32_splat(wp), wi = v128.load32_splat(wp, 4);
        ar = fmaRe(ar, wr, wi, xr, xi);
        ai = fmaIm(ai, wr, wi, xr, xi);
        pp += pRow;
        wp += 8;
      }
      storeGroup(ok + col, ar, ai, min(4, m1 - m));
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
          a0 = term64(a0, wr, v128.load(pp), wi, v128.load(qq));
          a1 = term64(a1, wr, v128.load(pp, 16), wi, v128.load(qq, 16));
          a2 = term64(a2, wr, v128.load(pp, 32), wi, v128.load(qq, 32));
          a3 = term64(a3, wr, v128.load(pp, 48), wi, v128.load(qq, 48));
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
        a0 = term64(a0, v128.load64_splat(wp), v128.load(pp), v128.load64_splat(wp, 8), v128.load(qq));
        pp += rowBytes;
        qq += rowBytes;
        wp += 16;
      }
      v128.store(ok + col, a0);
    }
  }
}
