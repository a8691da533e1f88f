/**
 * Dense products for the element and face blocks of the nonlinear assembler
 * (assemble-nonlinear.ts): both operands stored row-major with the summed index contiguous, so
 * each output entry is one dot product accumulated in registers and written once.
 */

/**
 * out[oo + r·ldo + c] += s · Σ_k A[ao + r·K + k] · B[bo + c·K + k] for r < nr, c < nc
 * (out += s·A·Bᵀ, A nr×K, B nc×K). Four rows by four columns per pass (sixteen accumulators, each
 * B entry loaded once per four rows), the row remainder two by four (addProductNT24); every entry is
 * the same sum in the same order as in addProductNT24 alone, so the results are bit-identical.
 * 4×4 measured 1.05–1.5× the 2×4 tile at the assembler's sizes in a same-process micro-benchmark
 * (common practice otherwise).
 */
export function addProductNT(
  A: Float64Array, ao: number, nr: number, B: Float64Array, bo: number, nc: number, K: number,
  s: number, out: Float64Array, oo: number, ldo: number,
): void {
  let r = 0;
  const nc4 = nc - (nc & 3);
  for (; r + 3 < nr; r += 4) {
    const a0 = ao + r * K, a1 = a0 + K, a2 = a1 + K, a3 = a2 + K;
    const o0 = oo + r * ldo, o1 = o0 + ldo, o2 = o1 + ldo, o3 = o2 + ldo;
    for (let c = 0; c < nc4; c += 4) {
      const b0 = bo + c * K, b1 = b0 + K, b2 = b1 + K, b3 = b2 + K;
      let s00 = 0, s01 = 0, s02 = 0, s03 = 0, s10 = 0, s11 = 0, s12 = 0, s13 = 0;
      let s20 = 0, s21 = 0, s22 = 0, s23 = 0, s30 = 0, s31 = 0, s32 = 0, s33 = 0;
      for (let k = 0; k < K; k++) {
        const x0 = A[a0 + k]!, x1 = A[a1 + k]!, x2 = A[a2 + k]!, x3 = A[a3 + k]!;
        let y = B[b0 + k]!; s00 += x0 * y; s10 += x1 * y; s20 += x2 * y; s30 += x3 * y;
        y = B[b1 + k]!; s01 += x0 * y; s11 += x1 * y; s21 += x2 * y; s31 += x3 * y;
        y = B[b2 + k]!; s02 += x0 * y; s12 += x1 * y; s22 += x2 * y; s32 += x3 * y;
        y = B[b3 + k]!; s03 += x0 * y; s13 += x1 * y; s23 += x2 * y; s33 += x3 * y;
      }
      out[o0 + c] += s * s00; out[o0 + c + 1] += s * s01; out[o0 + c + 2] += s * s02; out[o0 + c + 3] += s * s03;
      out[o1 + c] += s * s10; out[o1 + c + 1] += s * s11; out[o1 + c + 2] += s * s12; out[o1 + c + 3] += s * s13;
      out[o2 + c] += s * s20; out[o2 + c + 1] += s * s21; out[o2 + c + 2] += s * s22; out[o2 + c + 3] += s * s23;
      out[o3 + c] += s * s30; out[o3 + c + 1] += s * s31; out[o3 + c + 2] += s * s32; out[o3 + c + 3] += s * s33;
    }
    if (nc4 < nc) addProductNT24(A, a0, 4, B, bo + nc4 * K, nc - nc4, K, s, out, o0 + nc4, ldo);
  }
  if (r < nr) addProductNT24(A, ao + r * K, nr - r, B, bo, nc, K, s, out, oo + r * ldo, ldo);
}

/**
 * Two products against one B at once: outA[ooA + r·ldo + c] += sA · (A·Bᵀ)[r, c] and
 * outB[ooB + r·ldo + c] += sB · (A2·Bᵀ)[r, c] (A and A2 both nr×K, B nc×K; outA and outB may be
 * the same array at disjoint places). Rows r, r + 1 of both A and A2 per pass against four columns
 * (a 4×4 tile whose B loads serve both products); each entry is the same sum in the same order as
 * in addProductNT, so bit-identical to two calls of it.
 */
export function addProductNTPair(
  A: Float64Array, A2: Float64Array, ao: number, nr: number, B: Float64Array, bo: number, nc: number, K: number,
  sA: number, outA: Float64Array, ooA: number, sB: number, outB: Float64Array, ooB: number, ldo: number,
): void {
  let r = 0;
  const nc4 = nc - (nc & 3);
  for (; r + 1 < nr; r += 2) {
    const a0 = ao + r * K, a1 = a0 + K;
    const p0 = ooA + r * ldo, p1 = p0 + ldo, q0 = ooB + r * ldo, q1 = q0 + ldo;
    for (let c = 0; c < nc4; c += 4) {
      const b0 = bo + c * K, b1 = b0 + K, b2 = b1 + K, b3 = b2 + K;
      let s00 = 0, s01 = 0, s02 = 0, s03 = 0, s10 = 0, s11 = 0, s12 = 0, s13 = 0;
      let t00 = 0, t01 = 0, t02 = 0, t03 = 0, t10 = 0, t11 = 0, t12 = 0, t13 = 0;
      for (let k = 0; k < K; k++) {
        const x0 = A[a0 + k]!, x1 = A[a1 + k]!, z0 = A2[a0 + k]!, z1 = A2[a1 + k]!;
        let y = B[b0 + k]!; s00 += x0 * y; s10 += x1 * y; t00 += z0 * y; t10 += z1 * y;
        y = B[b1 + k]!; s01 += x0 * y; s11 += x1 * y; t01 += z0 * y; t11 += z1 * y;
        y = B[b2 + k]!; s02 += x0 * y; s12 += x1 * y; t02 += z0 * y; t12 += z1 * y;
        y = B[b3 + k]!; s03 += x0 * y; s13 += x1 * y; t03 += z0 * y; t13 += z1 * y;
      }
      outA[p0 + c] += sA * s00; outA[p0 + c + 1] += sA * s01; outA[p0 + c + 2] += sA * s02; outA[p0 + c + 3] += sA * s03;
      outA[p1 + c] += sA * s10; outA[p1 + c + 1] += sA * s11; outA[p1 + c + 2] += sA * s12; outA[p1 + c + 3] += sA * s13;
      outB[q0 + c] += sB * t00; outB[q0 + c + 1] += sB * t01; outB[q0 + c + 2] += sB * t02; outB[q0 + c + 3] += sB * t03;
      outB[q1 + c] += sB * t10; outB[q1 + c + 1] += sB * t11; outB[q1 + c + 2] += sB * t12; outB[q1 + c + 3] += sB * t13;
    }
    if (nc4 < nc) {
      addProductNT24(A, a0, 2, B, bo + nc4 * K, nc - nc4, K, sA, outA, p0 + nc4, ldo);
      addProductNT24(A2, a0, 2, B, bo + nc4 * K, nc - nc4, K, sB, outB, q0 + nc4, ldo);
    }
  }
  if (r < nr) {
    addProductNT24(A, ao + r * K, nr - r, B, bo, nc, K, sA, outA, ooA + r * ldo, ldo);
    addProductNT24(A2, ao + r * K, nr - r, B, bo, nc, K, sB, outB, ooB + r * ldo, ldo);
  }
}

/**
 * The same product as addProductNT with two rows by four columns per pass (eight accumulators):
 * the remainder kernel of addProductNT and addProductNTPair, and their plain twin in the tests.
 */
export function addProductNT24(
  A: Float64Array, ao: number, nr: number, B: Float64Array, bo: number, nc: number, K: number,
  s: number, out: Float64Array, oo: number, ldo: number,
): void {
  let r = 0;
  for (; r + 1 < nr; r += 2) {
    const a0 = ao + r * K, a1 = a0 + K;
    const o0 = oo + r * ldo, o1 = o0 + ldo;
    let c = 0;
    for (; c + 3 < nc; c += 4) {
      const b0 = bo + c * K, b1 = b0 + K, b2 = b1 + K, b3 = b2 + K;
      let s00 = 0, s01 = 0, s02 = 0, s03 = 0, s10 = 0, s11 = 0, s12 = 0, s13 = 0;
      for (let k = 0; k < K; k++) {
        const x0 = A[a0 + k]!, x1 = A[a1 + k]!;
        const y0 = B[b0 + k]!, y1 = B[b1 + k]!, y2 = B[b2 + k]!, y3 = B[b3 + k]!;
        s00 += x0 * y0; s01 += x0 * y1; s02 += x0 * y2; s03 += x0 * y3;
        s10 += x1 * y0; s11 += x1 * y1; s12 += x1 * y2; s13 += x1 * y3;
      }
      out[o0 + c] += s * s00; out[o0 + c + 1] += s * s01; out[o0 + c + 2] += s * s02; out[o0 + c + 3] += s * s03;
      out[o1 + c] += s * s10; out[o1 + c + 1] += s * s11; out[o1 + c + 2] += s * s12; out[o1 + c + 3] += s * s13;
    }
    for (; c + 1 < nc; c += 2) {
      const b0 = bo + c * K, b1 = b0 + K;
      let s00 = 0, s01 = 0, s10 = 0, s11 = 0;
      for (let k = 0; k < K; k++) {
        const x0 = A[a0 + k]!, x1 = A[a1 + k]!, y0 = B[b0 + k]!, y1 = B[b1 + k]!;
        s00 += x0 * y0; s01 += x0 * y1; s10 += x1 * y0; s11 += x1 * y1;
      }
      out[o0 + c] += s * s00; out[o0 + c + 1] += s * s01;
      out[o1 + c] += s * s10; out[o1 + c + 1] += s * s11;
    }
    if (c < nc) {
      const b0 = bo + c * K;
      let s00 = 0, s10 = 0;
      for (let k = 0; k < K; k++) { const y0 = B[b0 + k]!; s00 += A[a0 + k]! * y0; s10 += A[a1 + k]! * y0; }
      out[o0 + c] += s * s00; out[o1 + c] += s * s10;
    }
  }
  if (r < nr) {
    const a0 = ao + r * K, o0 = oo + r * ldo;
    for (let c = 0; c < nc; c++) {
      const b0 = bo + c * K;
      let s00 = 0;
      for (let k = 0; k < K; k++) s00 += A[a0 + k]! * B[b0 + k]!;
      out[o0 + c] += s * s00;
    }
  }
}

/** The transpose of a point-major table t[q·n + b] (nq×n) into b-major out[b·nq + q]. */
export function transposeTable(t: Float64Array, nq: number, n: number): Float64Array {
  const out = new Float64Array(nq * n);
  for (let q = 0; q < nq; q++) for (let b = 0; b < n; b++) out[b * nq + q] = t[q * n + b]!;
  return out;
}
