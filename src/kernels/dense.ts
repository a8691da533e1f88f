// Dense bs×bs row-major block kernels: twins of src/precond/dense.ts with the same arithmetic.
// Mat-vec tiles keep the TypeScript partial sums (s even columns, t odd columns) in the lanes of
// one f64x2 (bit-identical; the column loop takes two pairs per pass, both into the same lanes in
// column order); loops whose iterations are independent (row operations of LU, the
// inverse and C −= A·B, over the column index j) take two columns per v128 (also bit-identical:
// the same operations per entry). Pointers are byte addresses of the block's first entry.
import { f64At, setF64, i32At, setI32, pairAt } from './common';

@inline function rows3(a: usize, bs: i32, x: usize, y: usize, subtract: bool): void {
  const rowBytes = <usize>bs << 3;
  let r0 = a;
  for (let i = 0; i < bs; i += 3) {
    const r1 = r0 + rowBytes, r2 = r1 + rowBytes;
    let a0 = f64x2.splat(0), a1 = f64x2.splat(0), a2 = f64x2.splat(0);
    let j = 0;
    for (; j + 3 < bs; j += 4) {
      const o = <usize>j << 3;
      const xv = v128.load(x + o), xw = v128.load(x + o, 16);
      a0 = f64x2.add(a0, f64x2.mul(v128.load(r0 + o), xv));
      a1 = f64x2.add(a1, f64x2.mul(v128.load(r1 + o), xv));
      a2 = f64x2.add(a2, f64x2.mul(v128.load(r2 + o), xv));
      a0 = f64x2.add(a0, f64x2.mul(v128.load(r0 + o, 16), xw));
      a1 = f64x2.add(a1, f64x2.mul(v128.load(r1 + o, 16), xw));
      a2 = f64x2.add(a2, f64x2.mul(v128.load(r2 + o, 16), xw));
    }
    if (j + 1 < bs) {
      const xv = pairAt(x, j);
      a0 = f64x2.add(a0, f64x2.mul(pairAt(r0, j), xv));
      a1 = f64x2.add(a1, f64x2.mul(pairAt(r1, j), xv));
      a2 = f64x2.add(a2, f64x2.mul(pairAt(r2, j), xv));
      j += 2;
    }
    let s0 = f64x2.extract_lane(a0, 0), s1 = f64x2.extract_lane(a1, 0), s2 = f64x2.extract_lane(a2, 0);
    if (j < bs) { const xa = f64At(x, j); s0 += f64At(r0, j) * xa; s1 += f64At(r1, j) * xa; s2 += f64At(r2, j) * xa; }
    const v0 = s0 + f64x2.extract_lane(a0, 1), v1 = s1 + f64x2.extract_lane(a1, 1), v2 = s2 + f64x2.extract_lane(a2, 1);
    if (subtract) {
      setF64(y, i, f64At(y, i) - v0); setF64(y, i + 1, f64At(y, i + 1) - v1); setF64(y, i + 2, f64At(y, i + 2) - v2);
    } else {
      setF64(y, i, v0); setF64(y, i + 1, v1); setF64(y, i + 2, v2);
    }
    r0 += rowBytes * 3;
  }
}

@inline function rows4(a: usize, bs: i32, x: usize, y: usize, subtract: bool): void {
  // bs divisible by 4: four rows per pass, each row's partial sums as in rows2
  const rowBytes = <usize>bs << 3;
  let r0 = a;
  for (let i = 0; i < bs; i += 4) {
    const r1 = r0 + rowBytes, r2 = r1 + rowBytes, r3 = r2 + rowBytes;
    let a0 = f64x2.splat(0), a1 = f64x2.splat(0), a2 = f64x2.splat(0), a3 = f64x2.splat(0);
    for (let j = 0; j < bs; j += 4) {
      const o = <usize>j << 3;
      const xv = v128.load(x + o), xw = v128.load(x + o, 16);
      a0 = f64x2.add(a0, f64x2.mul(v128.load(r0 + o), xv));
      a1 = f64x2.add(a1, f64x2.mul(v128.load(r1 + o), xv));
      a2 = f64x2.add(a2, f64x2.mul(v128.load(r2 + o), xv));
      a3 = f64x2.add(a3, f64x2.mul(v128.load(r3 + o), xv));
      a0 = f64x2.add(a0, f64x2.mul(v128.load(r0 + o, 16), xw));
      a1 = f64x2.add(a1, f64x2.mul(v128.load(r1 + o, 16), xw));
      a2 = f64x2.add(a2, f64x2.mul(v128.load(r2 + o, 16), xw));
      a3 = f64x2.add(a3, f64x2.mul(v128.load(r3 + o, 16), xw));
    }
    const v0 = f64x2.extract_lane(a0, 0) + f64x2.extract_lane(a0, 1), v1 = f64x2.extract_lane(a1, 0) + f64x2.extract_lane(a1, 1);
    const v2 = f64x2.extract_lane(a2, 0) + f64x2.extract_lane(a2, 1), v3 = f64x2.extract_lane(a3, 0) + f64x2.extract_lane(a3, 1);
    if (subtract) {
      setF64(y, i, f64At(y, i) - v0); setF64(y, i + 1, f64At(y, i + 1) - v1);
      setF64(y, i + 2, f64At(y, i + 2) - v2); setF64(y, i + 3, f64At(y, i + 3) - v3);
    } else {
      setF64(y, i, v0); setF64(y, i + 1, v1); setF64(y, i + 2, v2); setF64(y, i + 3, v3);
    }
    r0 += rowBytes << 2;
  }
}

@inline function rows2(a: usize, bs: i32, x: usize, y: usize, subtract: bool): void {
  const rowBytes = <usize>bs << 3;
  let i = 0;
  let r0 = a;
  for (; i + 1 < bs; i += 2) {
    const r1 = r0 + rowBytes;
    let a0 = f64x2.splat(0), a1 = f64x2.splat(0);
    let j = 0;
    for (; j + 3 < bs; j += 4) {
      const o = <usize>j << 3;
      const xv = v128.load(x + o), xw = v128.load(x + o, 16);
      a0 = f64x2.add(a0, f64x2.mul(v128.load(r0 + o), xv));
      a1 = f64x2.add(a1, f64x2.mul(v128.load(r1 + o), xv));
      a0 = f64x2.add(a0, f64x2.mul(v128.load(r0 + o, 16), xw));
      a1 = f64x2.add(a1, f64x2.mul(v128.load(r1 + o, 16), xw));
    }
    if (j + 1 < bs) {
      const xv = pairAt(x, j);
      a0 = f64x2.add(a0, f64x2.mul(pairAt(r0, j), xv));
      a1 = f64x2.add(a1, f64x2.mul(pairAt(r1, j), xv));
      j += 2;
    }
    let s0 = f64x2.extract_lane(a0, 0), s1 = f64x2.extract_lane(a1, 0);
    if (j < bs) { const xa = f64At(x, j); s0 += f64At(r0, j) * xa; s1 += f64At(r1, j) * xa; }
    const v0 = s0 + f64x2.extract_lane(a0, 1), v1 = s1 + f64x2.extract_lane(a1, 1);
    if (subtract) { setF64(y, i, f64At(y, i) - v0); setF64(y, i + 1, f64At(y, i + 1) - v1); }
    else { setF64(y, i, v0); setF64(y, i + 1, v1); }
    r0 += rowBytes << 1;
  }
  if (i < bs) {
    let s: f64 = 0;
    for (let j = 0; j < bs; j++) s += f64At(r0, j) * f64At(x, j);
    if (subtract) setF64(y, i, f64At(y, i) - s); else setF64(y, i, s);
  }
}

/** y = A x (subtract false) or y −= A x (true); the dispatch of blockMatVec / blockMatVecSub. */
@inline export function matVecInto(a: usize, bs: i32, x: usize, y: usize, subtract: bool): void {
  if (bs == 1) {
    const v = load<f64>(a) * load<f64>(x);
    store<f64>(y, subtract ? load<f64>(y) - v : v);
    return;
  }
  if (bs == 2) {
    const x0 = load<f64>(x), x1 = load<f64>(x, 8);
    const v0 = load<f64>(a) * x0 + load<f64>(a, 8) * x1;
    const v1 = load<f64>(a, 16) * x0 + load<f64>(a, 24) * x1;
    if (subtract) { store<f64>(y, load<f64>(y) - v0); store<f64>(y, load<f64>(y, 8) - v1, 8); }
    else { store<f64>(y, v0); store<f64>(y, v1, 8); }
    return;
  }
  if (bs == 3) {
    const x0 = load<f64>(x), x1 = load<f64>(x, 8), x2 = load<f64>(x, 16);
    const v0 = load<f64>(a) * x0 + load<f64>(a, 8) * x1 + load<f64>(a, 16) * x2;
    const v1 = load<f64>(a, 24) * x0 + load<f64>(a, 32) * x1 + load<f64>(a, 40) * x2;
    const v2 = load<f64>(a, 48) * x0 + load<f64>(a, 56) * x1 + load<f64>(a, 64) * x2;
    if (subtract) { store<f64>(y, load<f64>(y) - v0); store<f64>(y, load<f64>(y, 8) - v1, 8); store<f64>(y, load<f64>(y, 16) - v2, 16); }
    else { store<f64>(y, v0); store<f64>(y, v1, 8); store<f64>(y, v2, 16); }
    return;
  }
  if (bs % 3 == 0 && bs <= 33) rows3(a, bs, x, y, subtract);
  else if ((bs & 3) == 0) rows4(a, bs, x, y, subtract);
  else rows2(a, bs, x, y, subtract);
}

export function blockMatVec(a: usize, bs: i32, x: usize, y: usize): void { matVecInto(a, bs, x, y, false); }
export function blockMatVecSub(a: usize, bs: i32, x: usize, y: usize): void { matVecInto(a, bs, x, y, true); }

/** x ← A⁻¹ x in place from luFactor output (twin of luSolve: two rows per pass, two sums per row). */
export function luSolve(lu: usize, piv: usize, bs: i32, x: usize): void {
  for (let k = 0; k < bs; k++) {
    const p = i32At(piv, k);
    if (p != k) { const t = f64At(x, k); setF64(x, k, f64At(x, p)); setF64(x, p, t); }
  }
  const rowBytes = <usize>bs << 3;
  let i = 1;
  for (; i + 1 < bs; i += 2) {
    const r0 = lu + (<usize>i) * rowBytes, r1 = r0 + rowBytes;
    let a = f64x2(f64At(x, i), 0), b = f64x2(f64At(x, i + 1), 0);
    let j = 0;
    for (; j + 1 < i; j += 2) {
      const xv = pairAt(x, j);
      a = f64x2.sub(a, f64x2.mul(pairAt(r0, j), xv));
      b = f64x2.sub(b, f64x2.mul(pairAt(r1, j), xv));
    }
    let a0 = f64x2.extract_lane(a, 0), b0 = f64x2.extract_lane(b, 0);
    if (j < i) { const x0 = f64At(x, j); a0 -= f64At(r0, j) * x0; b0 -= f64At(r1, j) * x0; }
    const xi = a0 + f64x2.extract_lane(a, 1);
    setF64(x, i, xi);
    setF64(x, i + 1, (b0 + f64x2.extract_lane(b, 1)) - f64At(r1, i) * xi);
  }
  if (i < bs) {
    const r0 = lu + (<usize>i) * rowBytes;
    let s0 = f64At(x, i), s1: f64 = 0;
    let j = 0;
    for (; j + 1 < i; j += 2) { s0 -= f64At(r0, j) * f64At(x, j); s1 -= f64At(r0, j + 1) * f64At(x, j + 1); }
    if (j < i) s0 -= f64At(r0, j) * f64At(x, j);
    setF64(x, i, s0 + s1);
  }
  i = bs - 1;
  for (; i >= 1; i -= 2) {
    const r0 = lu + (<usize>i) * rowBytes, r1 = r0 - rowBytes;
    let a = f64x2(f64At(x, i), 0), b = f64x2(f64At(x, i - 1), 0);
    let j = i + 1;
    for (; j + 1 < bs; j += 2) {
      const xv = pairAt(x, j);
      a = f64x2.sub(a, f64x2.mul(pairAt(r0, j), xv));
      b = f64x2.sub(b, f64x2.mul(pairAt(r1, j), xv));
    }
    let a0 = f64x2.extract_lane(a, 0), b0 = f64x2.extract_lane(b, 0);
    if (j < bs) { const x0 = f64At(x, j); a0 -= f64At(r0, j) * x0; b0 -= f64At(r1, j) * x0; }
    const xi = (a0 + f64x2.extract_lane(a, 1)) / f64At(r0, i);
    setF64(x, i, xi);
    setF64(x, i - 1, ((b0 + f64x2.extract_lane(b, 1)) - f64At(r1, i) * xi) / f64At(r1, i - 1));
  }
  if (i == 0) {
    let s0 = f64At(x, 0), s1: f64 = 0;
    let j = 1;
    for (; j + 1 < bs; j += 2) { s0 -= f64At(lu, j) * f64At(x, j); s1 -= f64At(lu, j + 1) * f64At(x, j + 1); }
    if (j < bs) s0 -= f64At(lu, j) * f64At(x, j);
    setF64(x, 0, (s0 + s1) / f64At(lu, 0));
  }
}

/** row[j] −= l·src[j] for j in [from, to) (independent entries: two per v128). */
@inline function rowUpdate(row: usize, src: usize, l: f64, from: i32, to: i32): void {
  const lv = f64x2.splat(l);
  let j = from;
  for (; j + 1 < to; j += 2) v128.store(row + (<usize>j << 3), f64x2.sub(pairAt(row, j), f64x2.mul(lv, pairAt(src, j))));
  if (j < to) setF64(row, j, f64At(row, j) - l * f64At(src, j));
}

@inline function swapRows(a: usize, rk: usize, rp: usize, bs: i32): void {
  let j = 0;
  for (; j + 1 < bs; j += 2) {
    const t = pairAt(rk, j);
    v128.store(rk + (<usize>j << 3), pairAt(rp, j));
    v128.store(rp + (<usize>j << 3), t);
  }
  if (j < bs) { const t = f64At(rk, j); setF64(rk, j, f64At(rp, j)); setF64(rp, j, t); }
}

export function luFactorUnblocked(a: usize, bs: i32, piv: usize, tiny: f64): i32 {
  const rowBytes = <usize>bs << 3;
  for (let k = 0; k < bs; k++) {
    const rk = a + (<usize>k) * rowBytes;
    let p = k;
    let best = Math.abs(f64At(rk, k));
    for (let i = k + 1; i < bs; i++) {
      const v = Math.abs(f64At(a + (<usize>i) * rowBytes, k));
      if (v > best) { best = v; p = i; }
    }
    setI32(piv, k, p);
    if (!(best > tiny)) return k;
    if (p != k) swapRows(a, rk, a + (<usize>p) * rowBytes, bs);
    const inv = 1 / f64At(rk, k);
    for (let i = k + 1; i < bs; i++) {
      const ri = a + (<usize>i) * rowBytes;
      const l = f64At(ri, k) * inv;
      setF64(ri, k, l);
      if (l != 0) rowUpdate(ri, rk, l, k + 1, bs);
    }
  }
  return -1;
}

/** Blocked LU for bs ≥ 16 (panels of 4), the twin of luFactor's fast path. */
export function luFactor(a: usize, bs: i32, piv: usize, tiny: f64): i32 {
  if (bs < 16) return luFactorUnblocked(a, bs, piv, tiny);
  const rowBytes = <usize>bs << 3;
  for (let k0 = 0; k0 < bs; k0 += 4) {
    const kEnd = min(k0 + 4, bs);
    for (let k = k0; k < kEnd; k++) {
      const rk = a + (<usize>k) * rowBytes;
      let p = k;
      let best = Math.abs(f64At(rk, k));
      for (let i = k + 1; i < bs; i++) {
        const v = Math.abs(f64At(a + (<usize>i) * rowBytes, k));
        if (v > best) { best = v; p = i; }
      }
      setI32(piv, k, p);
      if (!(best > tiny)) return k;
      if (p != k) swapRows(a, rk, a + (<usize>p) * rowBytes, bs);
      const inv = 1 / f64At(rk, k);
      for (let i = k + 1; i < bs; i++) {
        const ri = a + (<usize>i) * rowBytes;
        const l = f64At(ri, k) * inv;
        setF64(ri, k, l);
        for (let j = k + 1; j < kEnd; j++) setF64(ri, j, f64At(ri, j) - l * f64At(rk, j));
      }
    }
    if (kEnd == bs) break;
    for (let k = k0 + 1; k < kEnd; k++) {
      const rk = a + (<usize>k) * rowBytes;
      for (let q = k0; q < k; q++) {
        const l = f64At(rk, q);
        if (l == 0) continue;
        rowUpdate(rk, a + (<usize>q) * rowBytes, l, kEnd, bs);
      }
    }
    const r0 = a + (<usize>k0) * rowBytes;
    if (kEnd - k0 == 4) {
      const r1 = r0 + rowBytes, r2 = r1 + rowBytes, r3 = r2 + rowBytes;
      for (let i = kEnd; i < bs; i++) {
        const ri = a + (<usize>i) * rowBytes;
        const l0 = f64At(ri, k0), l1 = f64At(ri, k0 + 1), l2 = f64At(ri, k0 + 2), l3 = f64At(ri, k0 + 3);
        const v0 = f64x2.splat(l0), v1 = f64x2.splat(l1), v2 = f64x2.splat(l2), v3 = f64x2.splat(l3);
        let j = kEnd;
        for (; j + 1 < bs; j += 2) {
          const s = f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v0, pairAt(r0, j)), f64x2.mul(v1, pairAt(r1, j))), f64x2.mul(v2, pairAt(r2, j))), f64x2.mul(v3, pairAt(r3, j)));
          v128.store(ri + (<usize>j << 3), f64x2.sub(pairAt(ri, j), s));
        }
        if (j < bs) setF64(ri, j, f64At(ri, j) - (l0 * f64At(r0, j) + l1 * f64At(r1, j) + l2 * f64At(r2, j) + l3 * f64At(r3, j)));
      }
    } else {
      for (let i = kEnd; i < bs; i++) {
        const ri = a + (<usize>i) * rowBytes;
        for (let q = k0; q < kEnd; q++) {
          const l = f64At(ri, q);
          const rq = a + (<usize>q) * rowBytes;
          for (let j = kEnd; j < bs; j++) setF64(ri, j, f64At(ri, j) - l * f64At(rq, j));
        }
      }
    }
  }
  return -1;
}

/** row_i −= l0 row_0 + l1 row_1 + l2 row_2 + l3 row_3 over all bs columns. */
@inline function rowUpdate4(ri: usize, r0: usize, rowBytes: usize, l0: f64, l1: f64, l2: f64, l3: f64, bs: i32): void {
  const r1 = r0 + rowBytes, r2 = r1 + rowBytes, r3 = r2 + rowBytes;
  const v0 = f64x2.splat(l0), v1 = f64x2.splat(l1), v2 = f64x2.splat(l2), v3 = f64x2.splat(l3);
  let j = 0;
  for (; j + 1 < bs; j += 2) {
    const s = f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v0, pairAt(r0, j)), f64x2.mul(v1, pairAt(r1, j))), f64x2.mul(v2, pairAt(r2, j))), f64x2.mul(v3, pairAt(r3, j)));
    v128.store(ri + (<usize>j << 3), f64x2.sub(pairAt(ri, j), s));
  }
  if (j < bs) setF64(ri, j, f64At(ri, j) - (l0 * f64At(r0, j) + l1 * f64At(r1, j) + l2 * f64At(r2, j) + l3 * f64At(r3, j)));
}

/** out ← A⁻¹ from luFactor output (twin of luInverse). */
export function luInverse(lu: usize, piv: usize, bs: i32, out: usize): void {
  const rowBytes = <usize>bs << 3;
  memory.fill(out, 0, (<usize>(bs * bs)) << 3);
  for (let i = 0; i < bs; i++) setF64(out, i * bs + i, 1);
  for (let k = 0; k < bs; k++) {
    const p = i32At(piv, k);
    if (p != k) swapRows(out, out + (<usize>k) * rowBytes, out + (<usize>p) * rowBytes, bs);
  }
  for (let i = 1; i < bs; i++) {
    const ri = out + (<usize>i) * rowBytes, li = lu + (<usize>i) * rowBytes;
    let k = 0;
    for (; k + 3 < i; k += 4) {
      rowUpdate4(ri, out + (<usize>k) * rowBytes, rowBytes, f64At(li, k), f64At(li, k + 1), f64At(li, k + 2), f64At(li, k + 3), bs);
    }
    for (; k < i; k++) {
      const l = f64At(li, k);
      if (l == 0) continue;
      rowUpdate(ri, out + (<usize>k) * rowBytes, l, 0, bs);
    }
  }
  for (let i = bs - 1; i >= 0; i--) {
    const ri = out + (<usize>i) * rowBytes, ui = lu + (<usize>i) * rowBytes;
    let k = i + 1;
    for (; k + 3 < bs; k += 4) {
      rowUpdate4(ri, out + (<usize>k) * rowBytes, rowBytes, f64At(ui, k), f64At(ui, k + 1), f64At(ui, k + 2), f64At(ui, k + 3), bs);
    }
    for (; k < bs; k++) {
      const u = f64At(ui, k);
      if (u == 0) continue;
      rowUpdate(ri, out + (<usize>k) * rowBytes, u, 0, bs);
    }
    const d = 1 / f64At(ui, i);
    const dv = f64x2.splat(d);
    let j = 0;
    for (; j + 1 < bs; j += 2) v128.store(ri + (<usize>j << 3), f64x2.mul(pairAt(ri, j), dv));
    if (j < bs) setF64(ri, j, f64At(ri, j) * d);
  }
}

/**
 * C −= A·B (sign −1) or C += A·B after zeroing C (gemm), i-k-j order with k unrolled by 4, as in
 * TypeScript. Rows of C are taken two at a time for the k-groups of four, so each v128 load of B
 * serves two rows; every entry still gets the same operations in the same order.
 */
@inline function gemmInto(c: usize, a: usize, b: usize, bs: i32, subtract: bool): void {
  const rowBytes = <usize>bs << 3;
  const k4 = bs & ~3;
  let i0 = 0;
  for (; i0 + 1 < bs && k4 > 0; i0 += 2) {
    const ci = c + (<usize>i0) * rowBytes, ai = a + (<usize>i0) * rowBytes;
    const cj = ci + rowBytes, aj = ai + rowBytes;
    for (let k = 0; k < k4; k += 4) {
      const a0 = f64At(ai, k), a1 = f64At(ai, k + 1), a2 = f64At(ai, k + 2), a3 = f64At(ai, k + 3);
      const e0 = f64At(aj, k), e1 = f64At(aj, k + 1), e2 = f64At(aj, k + 2), e3 = f64At(aj, k + 3);
      const v0 = f64x2.splat(a0), v1 = f64x2.splat(a1), v2 = f64x2.splat(a2), v3 = f64x2.splat(a3);
      const w0 = f64x2.splat(e0), w1 = f64x2.splat(e1), w2 = f64x2.splat(e2), w3 = f64x2.splat(e3);
      const b0 = b + (<usize>k) * rowBytes, b1 = b0 + rowBytes, b2 = b1 + rowBytes, b3 = b2 + rowBytes;
      let j = 0;
      for (; j + 1 < bs; j += 2) {
        const p0 = pairAt(b0, j), p1 = pairAt(b1, j), p2 = pairAt(b2, j), p3 = pairAt(b3, j);
        const s = f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v0, p0), f64x2.mul(v1, p1)), f64x2.mul(v2, p2)), f64x2.mul(v3, p3));
        const t = f64x2.add(f64x2.add(f64x2.add(f64x2.mul(w0, p0), f64x2.mul(w1, p1)), f64x2.mul(w2, p2)), f64x2.mul(w3, p3));
        v128.store(ci + (<usize>j << 3), subtract ? f64x2.sub(pairAt(ci, j), s) : f64x2.add(pairAt(ci, j), s));
        v128.store(cj + (<usize>j << 3), subtract ? f64x2.sub(pairAt(cj, j), t) : f64x2.add(pairAt(cj, j), t));
      }
      if (j < bs) {
        const q0 = f64At(b0, j), q1 = f64At(b1, j), q2 = f64At(b2, j), q3 = f64At(b3, j);
        const s = a0 * q0 + a1 * q1 + a2 * q2 + a3 * q3;
        const t = e0 * q0 + e1 * q1 + e2 * q2 + e3 * q3;
        setF64(ci, j, subtract ? f64At(ci, j) - s : f64At(ci, j) + s);
        setF64(cj, j, subtract ? f64At(cj, j) - t : f64At(cj, j) + t);
      }
    }
    for (let k = k4; k < bs; k++) {
      const bk = b + (<usize>k) * rowBytes;
      const aik = f64At(ai, k), ajk = f64At(aj, k);
      if (subtract) { rowUpdate(ci, bk, aik, 0, bs); rowUpdate(cj, bk, ajk, 0, bs); }
      else { rowUpdate(ci, bk, -aik, 0, bs); rowUpdate(cj, bk, -ajk, 0, bs); }
    }
  }
  for (let i = i0; i < bs; i++) {
    const ci = c + (<usize>i) * rowBytes, ai = a + (<usize>i) * rowBytes;
    let k = 0;
    for (; k < k4; k += 4) {
      const a0 = f64At(ai, k), a1 = f64At(ai, k + 1), a2 = f64At(ai, k + 2), a3 = f64At(ai, k + 3);
      const v0 = f64x2.splat(a0), v1 = f64x2.splat(a1), v2 = f64x2.splat(a2), v3 = f64x2.splat(a3);
      const b0 = b + (<usize>k) * rowBytes, b1 = b0 + rowBytes, b2 = b1 + rowBytes, b3 = b2 + rowBytes;
      let j = 0;
      for (; j + 1 < bs; j += 2) {
        const s = f64x2.add(f64x2.add(f64x2.add(f64x2.mul(v0, pairAt(b0, j)), f64x2.mul(v1, pairAt(b1, j))), f64x2.mul(v2, pairAt(b2, j))), f64x2.mul(v3, pairAt(b3, j)));
        v128.store(ci + (<usize>j << 3), subtract ? f64x2.sub(pairAt(ci, j), s) : f64x2.add(pairAt(ci, j), s));
      }
      if (j < bs) {
        const s = a0 * f64At(b0, j) + a1 * f64At(b1, j) + a2 * f64At(b2, j) + a3 * f64At(b3, j);
        setF64(ci, j, subtract ? f64At(ci, j) - s : f64At(ci, j) + s);
      }
    }
    for (; k < bs; k++) {
      const aik = f64At(ai, k);
      const bk = b + (<usize>k) * rowBytes;
      if (subtract) rowUpdate(ci, bk, aik, 0, bs);
      else rowUpdate(ci, bk, -aik, 0, bs);
    }
  }
}

export function blockGemmSub(c: usize, a: usize, b: usize, bs: i32): void {
  if (bs == 1) { store<f64>(c, load<f64>(c) - load<f64>(a) * load<f64>(b)); return; }
  gemmInto(c, a, b, bs, true);
}

export function blockGemm(c: usize, a: usize, b: usize, bs: i32): void {
  memory.fill(c, 0, (<usize>(bs * bs)) << 3);
  gemmInto(c, a, b, bs, false);
}

export function allFinite(a: usize, len: i32): bool {
  // v − v is +0 for finite v and NaN for NaN or ±Inf, so OR-ing the bits of v − v over the range
  // leaves zero exactly when every entry is finite (the TypeScript twin's answer, without a branch
  // per entry; a non-finite range is read to its end)
  let m = i64x2.splat(0);
  let p = 0;
  for (; p + 7 < len; p += 8) {
    const o = a + (<usize>p << 3);
    const u0 = v128.load(o), u1 = v128.load(o, 16), u2 = v128.load(o, 32), u3 = v128.load(o, 48);
    m = v128.or(m, v128.or(v128.or(f64x2.sub(u0, u0), f64x2.sub(u1, u1)), v128.or(f64x2.sub(u2, u2), f64x2.sub(u3, u3))));
  }
  if (v128.any_true(m)) return false;
  for (; p < len; p++) { const v = f64At(a, p); if (v - v != 0) return false; }
  return true;
}

export function blockMaxAbs(a: usize, bs: i32): f64 {
  let m: f64 = 0;
  const end = bs * bs;
  for (let p = 0; p < end; p++) { const v = Math.abs(f64At(a, p)); if (v > m) m = v; }
  return m;
}
