// BSR and CSR products y = α·A x (+ z): twins of src/sparse/bsr.ts (mulAdd and its fast paths) with
// the same summation order. z = 0 means "no z"; z may equal y; x must not alias y.
// Block sizes 1 and 3 keep the block row of y in scalars (as the TypeScript kernels do); bs 2 and 4
// keep rows (0, 1) and (2, 3) in the lanes of f64x2 accumulators: a shuffle pairs the entries of
// one column of two rows, and each lane does its row's products and sums in the TypeScript order.
// The two- and three-row tiles keep, per row, the partial sums s (even columns) and t (odd
// columns) of the TypeScript tile in the two lanes of one f64x2, so the products and additions are
// the same ones in the same order (bit-identical results); one v128 load fetches a column pair of
// a block row and of x, and the column loop takes two pairs per pass (both into the same lanes, in
// column order). Block sizes 5–8 are specializations (the tile inlined with a constant bs).
import { f64At, setF64, i32At, f64Ptr, pairAt } from './common';

function mulAddBs1(n: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void {
  for (let i = 0; i < n; i++) {
    let s: f64 = 0;
    const end = i32At(rowPtr, i + 1);
    for (let k = i32At(rowPtr, i); k < end; k++) s += f64At(values, k) * f64At(x, i32At(colInd, k));
    setF64(y, i, z == 0 ? alpha * s : f64At(z, i) + alpha * s);
  }
}

function mulAddBs2(n: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void {
  // lanes (row 0, row 1): s += v[·,0]·x0 + v[·,1]·x1, as s0 and s1 of the TypeScript kernel
  for (let I = 0; I < n; I++) {
    let s = f64x2.splat(0);
    const end = i32At(rowPtr, I + 1);
    for (let k = i32At(rowPtr, I); k < end; k++) {
      const xv = v128.load(f64Ptr(x, i32At(colInd, k) * 2)), v = f64Ptr(values, k * 4);
      const ra = v128.load(v), rb = v128.load(v, 16);
      const c0 = v128.shuffle<f64>(ra, rb, 0, 2), c1 = v128.shuffle<f64>(ra, rb, 1, 3);
      s = f64x2.add(s, f64x2.add(f64x2.mul(c0, v128.shuffle<f64>(xv, xv, 0, 0)), f64x2.mul(c1, v128.shuffle<f64>(xv, xv, 1, 1))));
    }
    const yp = f64Ptr(y, I * 2), as = f64x2.mul(f64x2.splat(alpha), s);
    v128.store(yp, z == 0 ? as : f64x2.add(v128.load(f64Ptr(z, I * 2)), as));
  }
}

function mulAddBs3(n: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void {
  for (let I = 0; I < n; I++) {
    let s0: f64 = 0, s1: f64 = 0, s2: f64 = 0;
    const end = i32At(rowPtr, I + 1);
    for (let k = i32At(rowPtr, I); k < end; k++) {
      const xp = f64Ptr(x, i32At(colInd, k) * 3), v = f64Ptr(values, k * 9);
      const x0 = load<f64>(xp), x1 = load<f64>(xp, 8), x2 = load<f64>(xp, 16);
      s0 += load<f64>(v) * x0 + load<f64>(v, 8) * x1 + load<f64>(v, 16) * x2;
      s1 += load<f64>(v, 24) * x0 + load<f64>(v, 32) * x1 + load<f64>(v, 40) * x2;
      s2 += load<f64>(v, 48) * x0 + load<f64>(v, 56) * x1 + load<f64>(v, 64) * x2;
    }
    const yp = f64Ptr(y, I * 3);
    if (z == 0) { store<f64>(yp, alpha * s0); store<f64>(yp, alpha * s1, 8); store<f64>(yp, alpha * s2, 16); }
    else {
      const zp = f64Ptr(z, I * 3);
      store<f64>(yp, load<f64>(zp) + alpha * s0); store<f64>(yp, load<f64>(zp, 8) + alpha * s1, 8);
      store<f64>(yp, load<f64>(zp, 16) + alpha * s2, 16);
    }
  }
}

function mulAddBs4(n: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void {
  // lanes (row 0, row 1) and (row 2, row 3): s += ((v[·,0]·x0 + v[·,1]·x1) + v[·,2]·x2) + v[·,3]·x3,
  // as s0..s3 of the TypeScript kernel
  for (let I = 0; I < n; I++) {
    let s01 = f64x2.splat(0), s23 = f64x2.splat(0);
    const end = i32At(rowPtr, I + 1);
    for (let k = i32At(rowPtr, I); k < end; k++) {
      const xp = f64Ptr(x, i32At(colInd, k) * 4), v = f64Ptr(values, k * 16);
      const xa = v128.load(xp), xb = v128.load(xp, 16);
      const x0 = v128.shuffle<f64>(xa, xa, 0, 0), x1 = v128.shuffle<f64>(xa, xa, 1, 1);
      const x2 = v128.shuffle<f64>(xb, xb, 0, 0), x3 = v128.shuffle<f64>(xb, xb, 1, 1);
      const r0a = v128.load(v), r0b = v128.load(v, 16), r1a = v128.load(v, 32), r1b = v128.load(v, 48);
      const r2a = v128.load(v, 64), r2b = v128.load(v, 80), r3a = v128.load(v, 96), r3b = v128.load(v, 112);
      s01 = f64x2.add(s01, f64x2.add(f64x2.add(f64x2.add(
        f64x2.mul(v128.shuffle<f64>(r0a, r1a, 0, 2), x0), f64x2.mul(v128.shuffle<f64>(r0a, r1a, 1, 3), x1)),
        f64x2.mul(v128.shuffle<f64>(r0b, r1b, 0, 2), x2)), f64x2.mul(v128.shuffle<f64>(r0b, r1b, 1, 3), x3)));
      s23 = f64x2.add(s23, f64x2.add(f64x2.add(f64x2.add(
        f64x2.mul(v128.shuffle<f64>(r2a, r3a, 0, 2), x0), f64x2.mul(v128.shuffle<f64>(r2a, r3a, 1, 3), x1)),
        f64x2.mul(v128.shuffle<f64>(r2b, r3b, 0, 2), x2)), f64x2.mul(v128.shuffle<f64>(r2b, r3b, 1, 3), x3)));
    }
    const yp = f64Ptr(y, I * 4), av = f64x2.splat(alpha);
    const a01 = f64x2.mul(av, s01), a23 = f64x2.mul(av, s23);
    if (z == 0) { v128.store(yp, a01); v128.store(yp, a23, 16); }
    else {
      const zp = f64Ptr(z, I * 4);
      v128.store(yp, f64x2.add(v128.load(zp), a01)); v128.store(yp, f64x2.add(v128.load(zp, 16), a23), 16);
    }
  }
}

/** y segment of block row I initialised from z (or zeroed). */
@inline function initRow(yp: usize, z: usize, y: usize, I: i32, bs: i32): void {
  const bytes = <usize>bs << 3;
  if (z == 0) memory.fill(yp, 0, bytes);
  else if (z != y) memory.copy(yp, f64Ptr(z, I * bs), bytes);
}

@inline function tiled2(n: i32, bs: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void {
  const bb = bs * bs;
  const rowBytes = <usize>bs << 3;
  for (let I = 0; I < n; I++) {
    const yp = f64Ptr(y, I * bs);
    initRow(yp, z, y, I, bs);
    const end = i32At(rowPtr, I + 1);
    for (let k = i32At(rowPtr, I); k < end; k++) {
      const xp = f64Ptr(x, i32At(colInd, k) * bs);
      let r0 = f64Ptr(values, k * bb);
      let i = 0;
      for (; i + 1 < bs; i += 2) {
        const r1 = r0 + rowBytes;
        let a0 = f64x2.splat(0), a1 = f64x2.splat(0);
        let j = 0;
        for (; j + 3 < bs; j += 4) {
          const o = <usize>j << 3;
          const xv = v128.load(xp + o), xw = v128.load(xp + o, 16);
          a0 = f64x2.add(a0, f64x2.mul(v128.load(r0 + o), xv));
          a1 = f64x2.add(a1, f64x2.mul(v128.load(r1 + o), xv));
          a0 = f64x2.add(a0, f64x2.mul(v128.load(r0 + o, 16), xw));
          a1 = f64x2.add(a1, f64x2.mul(v128.load(r1 + o, 16), xw));
        }
        if (j + 1 < bs) {
          const xv = pairAt(xp, j);
          a0 = f64x2.add(a0, f64x2.mul(pairAt(r0, j), xv));
          a1 = f64x2.add(a1, f64x2.mul(pairAt(r1, j), xv));
          j += 2;
        }
        let s0 = f64x2.extract_lane(a0, 0), s1 = f64x2.extract_lane(a1, 0);
        if (j < bs) {
          const xa = f64At(xp, j);
          s0 += f64At(r0, j) * xa;
          s1 += f64At(r1, j) * xa;
        }
        setF64(yp, i, f64At(yp, i) + alpha * (s0 + f64x2.extract_lane(a0, 1)));
        setF64(yp, i + 1, f64At(yp, i + 1) + alpha * (s1 + f64x2.extract_lane(a1, 1)));
        r0 += rowBytes << 1;
      }
      if (i < bs) {
        let s: f64 = 0;
        for (let j = 0; j < bs; j++) s += f64At(r0, j) * f64At(xp, j);
        setF64(yp, i, f64At(yp, i) + alpha * s);
      }
    }
  }
}

@inline function tiled3(n: i32, bs: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void {
  const bb = bs * bs;
  const rowBytes = <usize>bs << 3;
  for (let I = 0; I < n; I++) {
    const yp = f64Ptr(y, I * bs);
    initRow(yp, z, y, I, bs);
    const end = i32At(rowPtr, I + 1);
    for (let k = i32At(rowPtr, I); k < end; k++) {
      const xp = f64Ptr(x, i32At(colInd, k) * bs);
      let r0 = f64Ptr(values, k * bb);
      for (let i = 0; i < bs; i += 3) {
        const r1 = r0 + rowBytes, r2 = r1 + rowBytes;
        let a0 = f64x2.splat(0), a1 = f64x2.splat(0), a2 = f64x2.splat(0);
        let j = 0;
        for (; j + 3 < bs; j += 4) {
          const o = <usize>j << 3;
          const xv = v128.load(xp + o), xw = v128.load(xp + o, 16);
          a0 = f64x2.add(a0, f64x2.mul(v128.load(r0 + o), xv));
          a1 = f64x2.add(a1, f64x2.mul(v128.load(r1 + o), xv));
          a2 = f64x2.add(a2, f64x2.mul(v128.load(r2 + o), xv));
          a0 = f64x2.add(a0, f64x2.mul(v128.load(r0 + o, 16), xw));
          a1 = f64x2.add(a1, f64x2.mul(v128.load(r1 + o, 16), xw));
          a2 = f64x2.add(a2, f64x2.mul(v128.load(r2 + o, 16), xw));
        }
        if (j + 1 < bs) {
          const xv = pairAt(xp, j);
          a0 = f64x2.add(a0, f64x2.mul(pairAt(r0, j), xv));
          a1 = f64x2.add(a1, f64x2.mul(pairAt(r1, j), xv));
          a2 = f64x2.add(a2, f64x2.mul(pairAt(r2, j), xv));
          j += 2;
        }
        let s0 = f64x2.extract_lane(a0, 0), s1 = f64x2.extract_lane(a1, 0), s2 = f64x2.extract_lane(a2, 0);
        if (j < bs) {
          const xa = f64At(xp, j);
          s0 += f64At(r0, j) * xa;
          s1 += f64At(r1, j) * xa;
          s2 += f64At(r2, j) * xa;
        }
        setF64(yp, i, f64At(yp, i) + alpha * (s0 + f64x2.extract_lane(a0, 1)));
        setF64(yp, i + 1, f64At(yp, i + 1) + alpha * (s1 + f64x2.extract_lane(a1, 1)));
        setF64(yp, i + 2, f64At(yp, i + 2) + alpha * (s2 + f64x2.extract_lane(a2, 1)));
        r0 += rowBytes * 3;
      }
    }
  }
}

@inline function tiled4(n: i32, bs: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void {
  // bs divisible by 4: four rows per pass, each row's partial sums as in tiled2 (one x load per four rows)
  const bb = bs * bs;
  const rowBytes = <usize>bs << 3;
  for (let I = 0; I < n; I++) {
    const yp = f64Ptr(y, I * bs);
    initRow(yp, z, y, I, bs);
    const end = i32At(rowPtr, I + 1);
    for (let k = i32At(rowPtr, I); k < end; k++) {
      const xp = f64Ptr(x, i32At(colInd, k) * bs);
      let r0 = f64Ptr(values, k * bb);
      for (let i = 0; i < bs; i += 4) {
        const r1 = r0 + rowBytes, r2 = r1 + rowBytes, r3 = r2 + rowBytes;
        let a0 = f64x2.splat(0), a1 = f64x2.splat(0), a2 = f64x2.splat(0), a3 = f64x2.splat(0);
        let j = 0;
        for (; j + 3 < bs; j += 4) {
          const o = <usize>j << 3;
          const xv = v128.load(xp + o), xw = v128.load(xp + o, 16);
          a0 = f64x2.add(a0, f64x2.mul(v128.load(r0 + o), xv));
          a1 = f64x2.add(a1, f64x2.mul(v128.load(r1 + o), xv));
          a2 = f64x2.add(a2, f64x2.mul(v128.load(r2 + o), xv));
          a3 = f64x2.add(a3, f64x2.mul(v128.load(r3 + o), xv));
          a0 = f64x2.add(a0, f64x2.mul(v128.load(r0 + o, 16), xw));
          a1 = f64x2.add(a1, f64x2.mul(v128.load(r1 + o, 16), xw));
          a2 = f64x2.add(a2, f64x2.mul(v128.load(r2 + o, 16), xw));
          a3 = f64x2.add(a3, f64x2.mul(v128.load(r3 + o, 16), xw));
        }
        setF64(yp, i, f64At(yp, i) + alpha * (f64x2.extract_lane(a0, 0) + f64x2.extract_lane(a0, 1)));
        setF64(yp, i + 1, f64At(yp, i + 1) + alpha * (f64x2.extract_lane(a1, 0) + f64x2.extract_lane(a1, 1)));
        setF64(yp, i + 2, f64At(yp, i + 2) + alpha * (f64x2.extract_lane(a2, 0) + f64x2.extract_lane(a2, 1)));
        setF64(yp, i + 3, f64At(yp, i + 3) + alpha * (f64x2.extract_lane(a3, 0) + f64x2.extract_lane(a3, 1)));
        r0 += rowBytes << 2;
      }
    }
  }
}

function mulAddBs5(n: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void { tiled2(n, 5, rowPtr, colInd, values, x, alpha, z, y); }
function mulAddBs6(n: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void { tiled3(n, 6, rowPtr, colInd, values, x, alpha, z, y); }
function mulAddBs7(n: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void { tiled2(n, 7, rowPtr, colInd, values, x, alpha, z, y); }
function mulAddBs8(n: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void { tiled4(n, 8, rowPtr, colInd, values, x, alpha, z, y); }
function mulAddTiled2(n: i32, bs: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void { tiled2(n, bs, rowPtr, colInd, values, x, alpha, z, y); }
function mulAddTiled4(n: i32, bs: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void { tiled4(n, bs, rowPtr, colInd, values, x, alpha, z, y); }
function mulAddTiled3(n: i32, bs: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void { tiled3(n, bs, rowPtr, colInd, values, x, alpha, z, y); }

/** y = z + α·A x (z = 0: y = α·A x), dispatching on bs like mulAdd in src/sparse/bsr.ts. */
export function bsrMulAdd(n: i32, bs: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void {
  switch (bs) {
    case 1: mulAddBs1(n, rowPtr, colInd, values, x, alpha, z, y); return;
    case 2: mulAddBs2(n, rowPtr, colInd, values, x, alpha, z, y); return;
    case 3: mulAddBs3(n, rowPtr, colInd, values, x, alpha, z, y); return;
    case 4: mulAddBs4(n, rowPtr, colInd, values, x, alpha, z, y); return;
    case 5: mulAddBs5(n, rowPtr, colInd, values, x, alpha, z, y); return;
    case 6: mulAddBs6(n, rowPtr, colInd, values, x, alpha, z, y); return;
    case 7: mulAddBs7(n, rowPtr, colInd, values, x, alpha, z, y); return;
    case 8: mulAddBs8(n, rowPtr, colInd, values, x, alpha, z, y); return;
    default:
      if (bs % 3 == 0 && bs <= 33) mulAddTiled3(n, bs, rowPtr, colInd, values, x, alpha, z, y);
      else if ((bs & 3) == 0) mulAddTiled4(n, bs, rowPtr, colInd, values, x, alpha, z, y);
      else mulAddTiled2(n, bs, rowPtr, colInd, values, x, alpha, z, y);
  }
}

/** The generic two-row tile for every bs (twin of bsrSpmvTiledKernel). */
export function bsrMulAddGeneric(n: i32, bs: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void {
  mulAddTiled2(n, bs, rowPtr, colInd, values, x, alpha, z, y);
}

/** CSR: y = z + α·A x; z = 0: y = α·A x (α = 1 gives csrSpmvKernel's y = s exactly). */
export function csrMulAdd(nRows: i32, rowPtr: usize, colInd: usize, values: usize, x: usize, alpha: f64, z: usize, y: usize): void {
  mulAddBs1(nRows, rowPtr, colInd, values, x, alpha, z, y);
}
