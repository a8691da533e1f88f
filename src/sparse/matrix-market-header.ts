/**
 * Matrix Market banner, size line and token rules (Boisvert, Pozo & Remington, "The Matrix
 * Market Exchange Formats: Initial Design", NISTIR 5935, 1996). These are the strict,
 * string-based reference rules; the streaming reader's byte-level fast path falls back to them
 * for every line it does not handle itself, so each error message is produced here.
 */
import { MAX_INT32_INDEX } from './types.js';

export interface MatrixMarketHeader {
  readonly object: 'matrix' | 'vector';
  readonly format: 'coordinate' | 'array';
  readonly field: 'real' | 'integer' | 'pattern';
  readonly symmetry: 'general' | 'symmetric' | 'skew-symmetric';
  /** Rows of the matrix (vector: its length). */
  readonly nRows: number;
  /** Columns (vector: 1). */
  readonly nCols: number;
  /** Declared number of data lines: L of the coordinate size line, or the values an array file stores. */
  readonly nEntries: number;
  /** Comment lines between banner and size line, without their leading `%`. */
  readonly comments: string[];
}

export type Banner = Pick<MatrixMarketHeader, 'object' | 'format' | 'field' | 'symmetry'>;

/** Outcome of a reference check: the message of a UserError (without file and line), or the parsed value. */
export type Checked<T> = { ok: true; value: T } | { ok: false; error: string };

const fail = (error: string): { ok: false; error: string } => ({ ok: false, error });

const BANNER_HINT = 'expected a banner "%%MatrixMarket matrix coordinate real general" (object, format, field, symmetry)';

/** Parse the banner line (leading blanks allowed, tokens case-insensitive, any run of blanks between them). */
export function parseBanner(line: string): Checked<Banner> {
  const tokens = splitBlanks(line);
  if (tokens.length === 0 || tokens[0].toLowerCase() !== '%%matrixmarket') {
    return fail(`not a Matrix Market file: ${BANNER_HINT}`);
  }
  if (tokens.length !== 5) return fail(`banner has ${tokens.length - 1} qualifiers, ${BANNER_HINT}`);
  const [object, format, field, symmetry] = tokens.slice(1).map((t) => t.toLowerCase());
  if (object !== 'matrix' && object !== 'vector') return fail(`banner object "${tokens[1]}": expected matrix or vector`);
  if (format !== 'coordinate' && format !== 'array') return fail(`banner format "${tokens[2]}": expected coordinate or array`);
  if (field !== 'real' && field !== 'integer' && field !== 'pattern' && field !== 'complex') {
    return fail(`banner field "${tokens[3]}": expected real, integer or pattern`);
  }
  if (symmetry !== 'general' && symmetry !== 'symmetric' && symmetry !== 'skew-symmetric' && symmetry !== 'hermitian') {
    return fail(`banner symmetry "${tokens[4]}": expected general, symmetric or skew-symmetric`);
  }
  // Impossible combinations first (they are wrong files, not merely unsupported ones).
  if (format === 'array' && field === 'pattern') return fail('banner combines array with pattern: an array file must store values');
  if (symmetry === 'hermitian' && field !== 'complex') return fail(`banner combines ${field} with hermitian: hermitian needs a complex field`);
  if (field === 'pattern' && symmetry === 'skew-symmetric') return fail('banner combines pattern with skew-symmetric: a skew-symmetric pattern has no signs');
  if (field === 'complex') return fail(`complex matrices are not supported (slabbench reads real, integer and pattern files)`);
  if (object === 'vector' && symmetry !== 'general') return fail(`banner combines vector with ${symmetry}: a vector is always general`);
  return {
    ok: true,
    value: {
      object, format, field, symmetry,
    } as Banner,
  };
}

/** Split on runs of blanks (space, tab), ignoring leading and trailing blanks. */
export function splitBlanks(line: string): string[] {
  const t = line.replace(/^[ \t]+|[ \t]+$/g, '');
  return t === '' ? [] : t.split(/[ \t]+/);
}

/** What the size line must hold for this banner. */
export function sizeLineShape(b: Banner): string[] {
  if (b.object === 'vector') return b.format === 'coordinate' ? ['length', 'entries'] : ['length'];
  return b.format === 'coordinate' ? ['rows', 'columns', 'entries'] : ['rows', 'columns'];
}

/** Parse the size line into nRows, nCols and the number of data lines to expect. */
export function parseSizeLine(line: string, b: Banner): Checked<{ nRows: number; nCols: number; nEntries: number }> {
  const names = sizeLineShape(b);
  const tokens = splitBlanks(line);
  if (tokens.length !== names.length) {
    return fail(`size line: expected ${names.length} integer${names.length > 1 ? 's' : ''} (${names.join(' ')}), found ${tokens.length} field${tokens.length === 1 ? '' : 's'}`);
  }
  const v: number[] = [];
  for (let t = 0; t < tokens.length; t++) {
    const tok = tokens[t];
    if (!/^\+?\d+$/.test(tok)) {
      return fail(`size line: ${names[t]} must be a non-negative integer, found "${clip(tok)}"`);
    }
    const x = Number(tok);
    if (x > MAX_INT32_INDEX) return fail(`size line: ${names[t]} ${tok} exceeds ${MAX_INT32_INDEX} (indices are 32-bit)`);
    v.push(x);
  }
  let nRows: number, nCols: number, nEntries: number;
  if (b.object === 'vector') {
    nRows = v[0];
    nCols = 1;
    nEntries = b.format === 'coordinate' ? v[1] : v[0];
  } else {
    nRows = v[0];
    nCols = v[1];
    if (b.symmetry !== 'general' && nRows !== nCols) {
      return fail(`size line: a ${b.symmetry} matrix must be square, found ${nRows}×${nCols}`);
    }
    if (b.format === 'coordinate') nEntries = v[2];
    else if (b.symmetry === 'general') nEntries = nRows * nCols;
    else if (b.symmetry === 'symmetric') nEntries = (nRows * (nRows + 1)) / 2;
    else nEntries = (nRows * (nRows - 1)) / 2;
  }
  if (b.format === 'array' && nRows * nCols > MAX_INT32_INDEX) {
    return fail(`size line: ${nRows}×${nCols} dense array has more than ${MAX_INT32_INDEX} entries (indices are 32-bit)`);
  }
  return { ok: true, value: { nRows, nCols, nEntries } };
}

const REAL_RE = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const INT_RE = /^[+-]?\d+$/;
const NONFINITE_RE = /^[+-]?(?:nan|inf|infinity)$/i;
const INDEX_RE = /^\+?\d+$/;
const TWO_53 = '9007199254740992';

/** Shorten a token for an error message. */
export function clip(tok: string): string {
  return tok.length > 24 ? `${tok.slice(0, 21)}...` : tok;
}

/** Reference index parse: 1-based, within 1..n. Returns the 0-based index. */
export function parseIndexToken(tok: string, what: 'row' | 'column', n: number): Checked<number> {
  if (!INDEX_RE.test(tok)) {
    if (/^-\d+$/.test(tok)) return fail(`${what} index ${tok} is negative: indices are 1-based (1..${n})`);
    return fail(`${what} index: expected a positive integer, found "${clip(tok)}"`);
  }
  const x = Number(tok);
  if (x === 0) return fail(`${what} index 0: indices are 1-based (1..${n})`);
  if (x > n) return fail(`${what} index ${clip(tok)} is out of range 1..${n}`);
  return { ok: true, value: x - 1 };
}

/**
 * Reference value parse. Real: C-style decimal (`12.`, `.5`, `1.5e-2`, `-2.8E2`), rounded like
 * Number(). Integer: optional sign and digits, |v| ≤ 2^53 so the float64 holds it exactly
 * (larger integers are rejected rather than rounded silently). NaN/Inf tokens and values that
 * overflow float64 are rejected unless allowNonFinite.
 */
export function parseValueToken(tok: string, field: 'real' | 'integer', allowNonFinite: boolean): Checked<number> {
  if (NONFINITE_RE.test(tok)) {
    if (!allowNonFinite) return fail(`non-finite value "${tok}" (rejected unless non-finite values are allowed: convert --allow-non-finite, or allowNonFinite in the API)`);
    if (field === 'integer') return fail(`expected an integer value, found "${tok}"`);
    return { ok: true, value: Number(tok.replace(/inf(inity)?$/i, 'Infinity').replace(/nan$/i, 'NaN')) };
  }
  if (field === 'integer') {
    if (!INT_RE.test(tok)) return fail(`expected an integer value, found "${clip(tok)}"`);
    const digits = tok.replace(/^[+-]?0*/, '');
    if (digits.length > 16 || (digits.length === 16 && digits > TWO_53)) {
      return fail(`integer value ${clip(tok)} exceeds 2^53 and cannot be held exactly in a float64`);
    }
    return { ok: true, value: Number(tok) };
  }
  if (!REAL_RE.test(tok)) return fail(`expected a real number, found "${clip(tok)}"`);
  const x = Number(tok);
  if (!Number.isFinite(x) && !allowNonFinite) {
    return fail(`value ${clip(tok)} overflows float64 (read as infinity only when non-finite values are allowed: convert --allow-non-finite)`);
  }
  return { ok: true, value: x };
}
