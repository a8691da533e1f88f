/**
 * Dense products for the element and face blocks of the nonlinear assembler
 * (assemble-nonlinear.ts): both operands stored row-major with the summed index contiguous, so
 * each output entry is one dot product accumulated in registers and written once.
 */

/**
 * out[oo + r·ldo + c] += s · Σ_k A[ao + r·K + k] · B[bo + c·K + k] for r < nr, c < nc
 * (out += s·A·Bᵀ, A nr×K, B nc×K). Two rows by four columns per pass (eight accumulators; 1.0–1.4×
 * two by two in a same-process micro-benchmark at the assembler's sizes, common practice otherwise).
 */
export function addProductNT(
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
