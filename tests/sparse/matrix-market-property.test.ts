/**
 * Property tests (fast-check, bounded runs): write→read is exact; the byte-level fast path agrees
 * with the string-based reference rules on valid and corrupted input; corrupted files give a
 * one-line UserError or a valid matrix, never another exception or a hang.
 */
import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { join } from 'node:path';
import type { Bsr, Csr } from '../../src/sparse/types.js';
import { bsrToCsr, csrToBsr } from '../../src/sparse/bsr.js';
import { UserError } from '../../src/util/errors.js';
import { readMatrixMarket, writeMatrixMarket } from '../../src/sparse/matrix-market.js';
import { decimalToDouble, DEC } from '../../src/sparse/decimal-to-double.js';
import { tempDir, readPieces, expectValidCsr } from './matrix-market-helpers.js';

const dir = tempDir('slabbench-mmprop-');
let fileNo = 0;
const enc = new TextEncoder();

function sameBits(a: Csr, b: Csr): boolean {
  if (a.nRows !== b.nRows || a.nCols !== b.nCols || a.values.length !== b.values.length) return false;
  for (let i = 0; i <= a.nRows; i++) if (a.rowPtr[i] !== b.rowPtr[i]) return false;
  for (let k = 0; k < a.values.length; k++) {
    if (a.colInd[k] !== b.colInd[k] || !Object.is(a.values[k], b.values[k])) return false;
  }
  return true;
}

const finite = fc.double({ noNaN: true, noDefaultInfinity: true });

/** Random CSR: unique sorted positions, any finite double (−0, subnormals, extremes included). */
const csrArb = fc.record({ nRows: fc.integer({ min: 0, max: 12 }), nCols: fc.integer({ min: 0, max: 12 }) }).chain(({ nRows, nCols }) =>
  fc.array(fc.tuple(fc.integer({ min: 0, max: Math.max(0, nRows - 1) }), fc.integer({ min: 0, max: Math.max(0, nCols - 1) }), finite),
    { maxLength: nRows * nCols === 0 ? 0 : 60 })
    .map((entries) => {
      const m = new Map<number, number>();
      for (const [i, j, v] of entries) m.set(i * nCols + j, v);
      const keys = [...m.keys()].sort((x, y) => x - y);
      const rowPtr = new Int32Array(nRows + 1);
      const colInd = new Int32Array(keys.length);
      const values = new Float64Array(keys.length);
      keys.forEach((key, k) => { const i = Math.floor(key / nCols); rowPtr[i + 1]++; colInd[k] = key % nCols; values[k] = m.get(key)!; });
      for (let i = 0; i < nRows; i++) rowPtr[i + 1] += rowPtr[i];
      return { nRows, nCols, rowPtr, colInd, values } as Csr;
    }));

describe('write → read round trips (fast-check)', () => {
  it('random sparse matrices come back bit for bit, negative zero included', async () => {
    await fc.assert(fc.asyncProperty(csrArb, fc.boolean(), async (a, gz) => {
      const p = join(dir, `r${fileNo++}.mtx${gz ? '.gz' : ''}`);
      await writeMatrixMarket(p, a);
      const back = (await readMatrixMarket(p)).csr;
      expectValidCsr(back);
      return sameBits(back, a);
    }), { numRuns: 80, seed: 20261201 });
  });

  it('random symmetric matrices written as symmetric come back whole', async () => {
    await fc.assert(fc.asyncProperty(csrArb.filter((a) => a.nRows === a.nCols || a.nRows * a.nCols === 0), async (a0) => {
      // symmetrize: A + Aᵀ pattern with mirrored values taken from the lower triangle
      const n = Math.min(a0.nRows, a0.nCols);
      const d = new Map<number, number>();
      for (let i = 0; i < n; i++) for (let k = a0.rowPtr[i]; k < a0.rowPtr[i + 1]; k++) {
        const j = a0.colInd[k];
        if (j < n) { const lo = Math.max(i, j), hi = Math.min(i, j); d.set(lo * n + hi, a0.values[k]); }
      }
      const rows: number[][] = Array.from({ length: n }, () => []);
      for (const [key] of d) { const i = Math.floor(key / n), j = key % n; rows[i].push(j); if (i !== j) rows[j].push(i); }
      const rowPtr = new Int32Array(n + 1);
      const cols: number[] = [], vals: number[] = [];
      for (let i = 0; i < n; i++) {
        rows[i].sort((x, y) => x - y);
        for (const j of rows[i]) { cols.push(j); vals.push(d.get(Math.max(i, j) * n + Math.min(i, j))!); }
        rowPtr[i + 1] = cols.length;
      }
      const a: Csr = { nRows: n, nCols: n, rowPtr, colInd: Int32Array.from(cols), values: Float64Array.from(vals) };
      const p = join(dir, `s${fileNo++}.mtx`);
      await writeMatrixMarket(p, a, { symmetric: true });
      const { header, csr } = await readMatrixMarket(p);
      return header.symmetry === 'symmetric' && sameBits(csr, a);
    }), { numRuns: 40, seed: 7 });
  });

  it('random block matrices (non-symmetric blocks) survive write → read and back to BSR', async () => {
    const bsrArb = fc.record({ bs: fc.integer({ min: 1, max: 4 }), nb: fc.integer({ min: 1, max: 5 }) }).chain(({ bs, nb }) =>
      fc.tuple(fc.array(fc.boolean(), { minLength: nb * nb, maxLength: nb * nb }), fc.array(finite, { minLength: nb * nb * bs * bs, maxLength: nb * nb * bs * bs }))
        .map(([mask, vals]) => {
          const rowPtr = new Int32Array(nb + 1);
          const colInd: number[] = [];
          const values: number[] = [];
          for (let I = 0; I < nb; I++) {
            for (let J = 0; J < nb; J++) {
              if (!mask[I * nb + J] && I !== J) continue;
              colInd.push(J);
              const o = (I * nb + J) * bs * bs;
              for (let t = 0; t < bs * bs; t++) values.push(vals[o + t]);
            }
            rowPtr[I + 1] = colInd.length;
          }
          return { nBlockRows: nb, nBlockCols: nb, bs, rowPtr, colInd: Int32Array.from(colInd), values: Float64Array.from(values) } as Bsr;
        }));
    await fc.assert(fc.asyncProperty(bsrArb, async (b) => {
      const a = bsrToCsr(b);
      const p = join(dir, `b${fileNo++}.mtx`);
      await writeMatrixMarket(p, a);
      const back = (await readMatrixMarket(p)).csr;
      const b2 = csrToBsr(back, b.bs);
      return sameBits(back, a) && b2.colInd.length === b.colInd.length
        && b2.values.every((v, k) => Object.is(v, b.values[k]));
    }), { numRuns: 60, seed: 3 });
  });
});

/** Ways writers print numbers. */
function formats(x: number, k: number): string[] {
  const ax = Math.abs(x);
  const out = [String(x), x.toExponential(k % 21), x.toPrecision(1 + (k % 21)), x.toExponential(16).toUpperCase(), `+${String(ax)}`];
  if (ax < 1e15 && ax > 1e-6) out.push(x.toFixed(k % 12), `${x < 0 ? '-' : ''}000${ax.toFixed(3)}00`);
  if (ax < 1 && ax > 1e-6) out.push((x < 0 ? '-' : '') + ax.toFixed(8).slice(1)); // ".12345678"
  return out;
}

describe('fast path against the reference rules (fast-check)', () => {
  it('numbers in many printed forms read exactly as Number() reads them, on both paths', async () => {
    await fc.assert(fc.asyncProperty(fc.array(fc.tuple(finite, fc.nat(40)), { minLength: 1, maxLength: 30 }), async (xs) => {
      const toks = xs.flatMap(([x, k]) => formats(x, k)).filter((t) => Number.isFinite(Number(t))); // rounding up to 2e308 overflows
      const text = `%%MatrixMarket matrix coordinate real general\n1 ${toks.length} ${toks.length}\n${toks.map((t, j) => `1 ${j + 1} ${t}`).join('\n')}\n`;
      const fast = (await readPieces('f.mtx', [enc.encode(text)])).csr;
      const ref = (await readPieces('f.mtx', [enc.encode(text)], { referenceOnly: true })).csr;
      return toks.every((t, j) => Object.is(fast.values[j], Number(t)) && Object.is(ref.values[j], Number(t)));
    }), { numRuns: 150, seed: 11 });
  });

  it('decimalToDouble is correctly rounded or asks for the fallback (up to 19 digits, |q| ≤ 44, exact midpoints)', () => {
    fc.assert(fc.property(fc.bigInt({ min: 1n, max: 10n ** 19n - 1n }), fc.integer({ min: -50, max: 50 }), (m, q) => {
      const s = m.toString();
      const a = s.slice(0, 15), b = s.slice(15);
      DEC[0] = Number(a); DEC[1] = b === '' ? 0 : Number(b);
      const ok = decimalToDouble(b.length, q);
      return !ok || Object.is(DEC[2], Number(`${s}e${q}`));
    }), { numRuns: 20000, seed: 5 });
    // 2^53 + 1 is exactly halfway between two doubles: must not be decided by the fast path alone
    DEC[0] = 900719925474099; DEC[1] = 3;
    expect(decimalToDouble(1, 0) ? DEC[2] : Number('9007199254740993')).toBe(9007199254740992);
  });
});

/** A small valid file of any kind as text. */
const validFileArb = fc.record({
  kind: fc.constantFrom('general', 'symmetric', 'skew-symmetric', 'pattern', 'integer', 'array', 'vector'),
  n: fc.integer({ min: 1, max: 6 }),
  vals: fc.array(fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e6, max: 1e6 }), { minLength: 40, maxLength: 40 }),
  eol: fc.constantFrom('\n', '\r\n', '\r'),
  bom: fc.boolean(),
}).map(({ kind, n, vals, eol, bom }) => {
  const lines: string[] = [];
  let v = 0;
  const val = () => String(vals[v++ % vals.length]);
  if (kind === 'array') {
    lines.push('%%MatrixMarket matrix array real general', `${n} 2`);
    for (let k = 0; k < 2 * n; k++) lines.push(val());
  } else if (kind === 'vector') {
    lines.push('%%MatrixMarket vector coordinate real general', `${n} ${n}`);
    for (let i = n; i >= 1; i--) lines.push(`${i} ${val()}`);
  } else {
    const field = kind === 'pattern' ? 'pattern' : kind === 'integer' ? 'integer' : 'real';
    const sym = kind === 'symmetric' || kind === 'skew-symmetric' ? kind : 'general';
    const ents: string[] = [];
    for (let i = 1; i <= n; i++) for (let j = 1; j <= (sym === 'general' ? n : i - (sym === 'skew-symmetric' ? 1 : 0)); j++) {
      if ((i * 7 + j * 3) % 3 === 0) continue;
      ents.push(field === 'pattern' ? `${i} ${j}` : `${i} ${j} ${field === 'integer' ? Math.trunc(vals[v++ % 40]) : val()}`);
    }
    lines.push(`%%MatrixMarket matrix coordinate ${field} ${sym}`, '% comment', `${n} ${n} ${ents.length}`, ...ents);
  }
  return (bom ? '\u00ef\u00bb\u00bf' : '') + lines.join(eol) + eol; // BOM bytes, as latin1 text
});

const mutationArb = fc.array(fc.oneof(
  fc.record({ op: fc.constant('flip' as const), at: fc.nat(), byte: fc.integer({ min: 0, max: 255 }) }),
  fc.record({ op: fc.constant('cut' as const), at: fc.nat() }),
  fc.record({ op: fc.constant('insert' as const), at: fc.nat(), tok: fc.constantFrom(' ', '\n', '\r', '\t', '%', '-', '+', '.', 'e', 'E', '0', '9', '99999999999', 'nan', 'inf', '1e999', ' 1 ', 'x', '\u00ff', '%%MatrixMarket', '\uFEFF') }),
  fc.record({ op: fc.constant('delete' as const), at: fc.nat(), len: fc.integer({ min: 1, max: 8 }) }),
), { minLength: 1, maxLength: 4 });

function mutate(text: string, muts: Array<{ op: string; at: number; byte?: number; tok?: string; len?: number }>): Uint8Array {
  let b = Buffer.from(text, 'latin1');
  for (const m of muts) {
    const at = b.length === 0 ? 0 : m.at % (b.length + 1);
    if (m.op === 'flip' && b.length > 0) { b = Buffer.from(b); b[at % b.length] = m.byte!; }
    else if (m.op === 'cut') b = b.subarray(0, at);
    else if (m.op === 'insert') b = Buffer.concat([b.subarray(0, at), Buffer.from(m.tok!, 'utf8'), b.subarray(at)]);
    else if (m.op === 'delete') b = Buffer.concat([b.subarray(0, at), b.subarray(at + m.len!)]);
  }
  return b;
}

type Outcome = { ok: true; csr: Csr } | { ok: false; message: string };

async function outcome(bytes: Uint8Array, cuts: number[], referenceOnly: boolean): Promise<Outcome> {
  const pieces: Uint8Array[] = [];
  let last = 0;
  for (const c of [...new Set(cuts.map((x) => x % (bytes.length + 1)))].sort((x, y) => x - y)) { pieces.push(bytes.subarray(last, c)); last = c; }
  pieces.push(bytes.subarray(last));
  try {
    const { csr } = await readPieces('corrupt.mtx', pieces, { referenceOnly, duplicates: 'reject' });
    return { ok: true, csr };
  } catch (e) {
    if (!(e instanceof UserError)) throw e; // anything else fails the property
    return { ok: false, message: e.message };
  }
}

describe('corrupted files (fast-check)', () => {
  it('give a one-line UserError naming the file, or a valid matrix; fast and reference paths agree', async () => {
    await fc.assert(fc.asyncProperty(validFileArb, mutationArb, fc.array(fc.nat(), { maxLength: 4 }), async (text, muts, cuts) => {
      const bytes = mutate(text, muts);
      const fast = await outcome(bytes, cuts, false);
      const ref = await outcome(bytes, [], true);
      if (fast.ok) {
        expectValidCsr(fast.csr);
        expect(ref.ok).toBe(true);
        if (ref.ok) expect(sameBits(fast.csr, ref.csr)).toBe(true);
      } else {
        expect(fast.message).toMatch(/^corrupt\.mtx(:\d+)?: \S/);
        expect(fast.message).not.toContain('\n');
        expect(ref.ok ? '(matrix)' : ref.message).toBe(fast.message);
      }
    }), { numRuns: 400, seed: 99, timeout: 5000 });
  });

  it('valid files read the same for any chunk split and line ending', async () => {
    await fc.assert(fc.asyncProperty(validFileArb, fc.array(fc.nat(), { maxLength: 6 }), async (text, cuts) => {
      const bytes = Buffer.from(text, 'latin1');
      const a = await outcome(bytes, cuts, false);
      const b = await outcome(bytes, [], false);
      return a.ok && b.ok && sameBits(a.csr, b.csr);
    }), { numRuns: 150, seed: 123 });
  });
});
