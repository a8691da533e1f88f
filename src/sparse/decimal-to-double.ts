/**
 * Exact decimal → float64 conversion without building a string, for the reader's fast path.
 *
 * The value is M · 10^q with M < 10^19 given as mA · 10^nB + mB (mA < 10^15 and mB < 10^nB,
 * nB ≤ 4, so both parts are exact doubles). M is formed exactly as a double-double, multiplied
 * or divided by exact powers of ten (10^k, k ≤ 22, is exact in binary64) with Dekker's error-free
 * product (Dekker, "A floating-point technique for extending the available precision", Numer.
 * Math. 18, 1971), giving the value to about 2^-100 relative. The final rounding to binary64 is
 * then correct unless the value lies within 2^-30 ulp of a midpoint between two doubles; in that
 * case (probability ~2^-29 for random input) the function returns false and the caller uses
 * Number() on the token. Values with |q| ≤ 22 and M ≤ 2^53 take Clinger's one-operation path
 * (Clinger, "How to read floating point numbers accurately", PLDI 1990).
 */

const POW10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
  1e17, 1e18, 1e19, 1e20, 1e21, 1e22];
const SPLITTER = 134217729; // 2^27 + 1
const f64 = new Float64Array(1);
const u32 = new Uint32Array(f64.buffer);
const LITTLE = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;
const HI = LITTLE ? 1 : 0, LO = LITTLE ? 0 : 1;

/** Low part of the exact product a·b (a·b = fl(a·b) + result), Dekker's split. */
function prodErr(a: number, b: number, p: number): number {
  let c = SPLITTER * a;
  const ah = c - (c - a), al = a - ah;
  c = SPLITTER * b;
  const bh = c - (c - b), bl = b - bh;
  return ((ah * bh - p) + ah * bl + al * bh) + al * bl;
}

/**
 * Scratch shared with the caller: DEC[0] = mA, DEC[1] = mB in; DEC[2] = result out. Doubles go
 * through a typed array because passing or returning them across a call that V8 does not inline
 * boxes each one on the heap, and the reader calls this once per value.
 */
export const DEC = new Float64Array(3);
/** Double-double intermediate (hi, lo), kept in a typed array for the same reason. */
const DD = new Float64Array(2);

/** DD ← (a + b) / P for an exact double P. */
function ddDiv(a: number, b: number, P: number): void {
  const q1 = a / P;
  const s = q1 * P;
  const t = prodErr(q1, P, s);
  const r = ((a - s) - t) + b;
  const q2 = r / P;
  const h = q1 + q2;
  DD[0] = h;
  DD[1] = q2 - (h - q1);
}

/** DD ← (a + b) · P for an exact double P. */
function ddMul(a: number, b: number, P: number): void {
  const s = a * P;
  const t = prodErr(a, P, s) + b * P;
  const h = s + t;
  DD[0] = h;
  DD[1] = t - (h - s);
}

/**
 * DEC[2] ← correctly rounded value of (DEC[0]·10^nB + DEC[1])·10^q; returns false (DEC[2]
 * unspecified) when the caller must fall back to Number(). Requires 0 < DEC[0] < 10^15,
 * 0 ≤ DEC[1] < 10^nB, 0 ≤ nB ≤ 4.
 */
export function decimalToDouble(nB: number, q: number): boolean {
  const mA = DEC[0], mB = DEC[1];
  if (nB === 0 && q >= -22 && q <= 22) {
    DEC[2] = q === 0 ? mA : q > 0 ? mA * POW10[q] : mA / POW10[-q];
    return true;
  }
  if (q < -44 || q > 44) return false;
  // M exactly as a double-double.
  let H: number, L: number;
  if (nB === 0) { H = mA; L = 0; } else {
    const p = mA * POW10[nB];
    const err = prodErr(mA, POW10[nB], p);
    const s = p + mB;
    const bb = s - p;
    const e1 = (p - (s - bb)) + (mB - bb);
    L = e1 + err;
    H = s + L;
    L = L - (H - s);
  }
  if (q === 0) { DD[0] = H; DD[1] = L; } else if (q < 0) {
    if (q >= -22) ddDiv(H, L, POW10[-q]);
    else { ddDiv(H, L, 1e22); ddDiv(DD[0], DD[1], POW10[-q - 22]); }
  } else if (q <= 22) ddMul(H, L, POW10[q]);
  else { ddMul(H, L, 1e22); ddMul(DD[0], DD[1], POW10[q - 22]); }
  const a = DD[0], b = DD[1];
  const s = a + b;
  const e = (a - s) + b;
  // Distance to the nearest midpoint, in units of ulp(s).
  f64[0] = s;
  const hi = u32[HI] & 0x7fffffff, lo = u32[LO];
  const bexp = hi >>> 20;
  if (bexp <= 52 || bexp >= 2046) return false;
  u32[HI] = (bexp - 52) << 20; u32[LO] = 0;
  const ulp = f64[0];
  const pow2 = (hi & 0xfffff) === 0 && lo === 0;
  const half = pow2 && (e < 0) === (s > 0) && e !== 0 ? ulp / 4 : ulp / 2;
  if (Math.abs(Math.abs(e) - half) <= ulp * 9.313225746154785e-10) return false; // 2^-30 ulp
  DEC[2] = s;
  return true;
}
