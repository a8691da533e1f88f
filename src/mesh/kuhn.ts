/**
 * Kuhn (Freudenthal) triangulation of the unit D-cube: for every permutation σ of the D axes, the
 * simplex {y_σ(1) ≥ y_σ(2) ≥ … ≥ y_σ(D)} with vertices v_0 = 0, v_j = v_{j−1} + e_σ(j). The D!
 * simplices have volume 1/D! each, fill the cube, and the split is conforming across translated cubes
 * because every cube face is cut by the same rule (Freudenthal, Ann. Math. 43, 1942; Kuhn, IBM J.
 * Res. Dev. 4, 1960).
 */

/** All permutations of 0..D−1 in lexicographic order, D!·D entries. */
export function kuhnPermutations(dimPlusOne: number): Int32Array {
  const D = dimPlusOne;
  if (!Number.isInteger(D) || D < 1 || D > 8) throw new RangeError(`kuhnPermutations: dimension must be 1..8, got ${D}`);
  const out: number[] = [];
  const used = new Array<boolean>(D).fill(false);
  const cur: number[] = [];
  const rec = (): void => {
    if (cur.length === D) { out.push(...cur); return; }
    for (let a = 0; a < D; a++) {
      if (used[a]) continue;
      used[a] = true; cur.push(a);
      rec();
      cur.pop(); used[a] = false;
    }
  };
  rec();
  return Int32Array.from(out);
}

/**
 * Lattice offsets (0/1 per axis) of the D+1 vertices of every Kuhn simplex of the unit D-cube:
 * entry [(s·(D+1) + j)·D + axis]. Simplex s follows permutation s of kuhnPermutations(D).
 */
export function kuhnVertexOffsets(dimPlusOne: number): Int8Array {
  const D = dimPlusOne;
  const perms = kuhnPermutations(D);
  const nSimplices = perms.length / D;
  const out = new Int8Array(nSimplices * (D + 1) * D);
  for (let s = 0; s < nSimplices; s++) {
    for (let j = 1; j <= D; j++) {
      const base = (s * (D + 1) + j) * D;
      for (let a = 0; a < D; a++) out[base + a] = out[base - D + a];
      out[base + perms[s * D + j - 1]] = 1;
    }
  }
  return out;
}

/** Sign of permutation s (+1 even, −1 odd): the orientation of Kuhn simplex s. */
export function permutationSign(perm: Int32Array, offset: number, D: number): number {
  let sign = 1;
  for (let i = 0; i < D; i++) for (let j = i + 1; j < D; j++) if (perm[offset + i] > perm[offset + j]) sign = -sign;
  return sign;
}
