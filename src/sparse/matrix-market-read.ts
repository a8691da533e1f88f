/**
 * Streaming Matrix Market reader (NISTIR 5935, Boisvert, Pozo & Remington 1996).
 *
 * The file is read in 1 MiB pieces (gunzipped when named *.gz or starting with the gzip magic
 * 1f 8b) and scanned piece by piece; it never exists as one string. Lines end at LF, CRLF or a
 * bare CR. Data lines of coordinate files go through a byte-level fast path (integer indices;
 * decimals converted exactly without strings, see decimal-to-double.ts); any line the fast path
 * does not recognise is decoded and handed to the string-based reference rules in
 * matrix-market-header.ts, which either parse it or explain what is wrong with file and line.
 *
 * Entries go straight into typed arrays preallocated from the declared count (after a memory
 * check); the CSR is built from them by a counting sort (matrix-market-assemble.ts).
 */
import { createReadStream, promises as fsp } from 'node:fs';
import { createGunzip } from 'node:zlib';
import { pipeline } from 'node:stream';
import { totalmem } from 'node:os';
import type { Readable } from 'node:stream';
import type { Csr } from './types.js';
import { MAX_INT32_INDEX } from './types.js';
import { UserError, fileError } from '../util/errors.js';
import {
  type Banner, type MatrixMarketHeader, parseBanner, parseSizeLine, parseIndexToken, parseValueToken, splitBlanks, clip,
} from './matrix-market-header.js';
import { decimalToDouble, DEC } from './decimal-to-double.js';
import { assembleGeneral, assembleRowOrdered, assembleSymmetric, expandedCount } from './matrix-market-assemble.js';

export interface ReadMatrixMarketOptions {
  /** 'sum' (default): entries given twice are added. 'reject': the second one is an error naming its line. */
  duplicates?: 'sum' | 'reject';
  /** Accept nan/inf tokens and values that overflow float64 (default false: rejected with the line). */
  allowNonFinite?: boolean;
  /**
   * Refuse files whose declared size needs more bytes than this to read (checked before allocating).
   * Default: SLABBENCH_READ_LIMIT_MB (MiB) when set, else half of the machine's memory.
   */
  memoryLimitBytes?: number;
  /** Parse every line with the string-based reference rules (slow; used by tests to check the fast path). */
  referenceOnly?: boolean;
}

export interface MatrixMarketFile {
  header: MatrixMarketHeader;
  csr: Csr;
}

const LF = 10, CR = 13, SP = 32, TAB = 9, PCT = 37, MINUS = 45, PLUS = 43, DOT = 46, D0 = 48, D9 = 57;
/** A line longer than this is not Matrix Market (guards binary files without newlines). */
const MAX_LINE_BYTES = 1 << 20;

const PHASE_BANNER = 0, PHASE_SIZE = 1, PHASE_DATA = 2, PHASE_DONE = 3;

/** Default read limit in bytes (documented in README "Size limits"). */
export function defaultReadLimitBytes(): number {
  const env = process.env.SLABBENCH_READ_LIMIT_MB;
  if (env !== undefined && env !== '') {
    const mb = Number(env);
    if (!Number.isFinite(mb) || mb <= 0) throw new UserError(`SLABBENCH_READ_LIMIT_MB: expected a positive number of MiB, found "${env}"`);
    return mb * 1024 * 1024;
  }
  return Math.floor(totalmem() / 2);
}

/** Bytes needed to read a file with this header (triples + CSR), before any allocation. */
export function readBytesEstimate(b: Banner, nRows: number, nCols: number, nEntries: number): number {
  if (b.format === 'array') return nRows * nCols * 12 + (nRows + 1) * 4;
  const triples = nEntries * 16;
  const rowPtr = (nRows + 1) * 8;
  return b.symmetry === 'general' ? triples + rowPtr : triples + 2 * nEntries * 12 + rowPtr;
}

function fmtBytes(x: number): string {
  return x >= 2 ** 30 ? `${(x / 2 ** 30).toFixed(1)} GiB` : `${(x / 2 ** 20).toFixed(1)} MiB`;
}

/**
 * Line-by-line state machine fed with byte chunks. One instance reads one file.
 * In probe mode it stores nothing and records the line of the second occurrence of one pair
 * (used only to name the line of a rejected duplicate after the CSR pass found it).
 */
class MatrixMarketParser {
  line = 1;
  private phase = PHASE_BANNER;
  private carry: Buffer | null = null;
  private skipLF = false;
  private atStart = true;
  private banner!: Banner;
  private readonly comments: string[] = [];
  nRows = 0;
  nCols = 0;
  nEntries = 0;
  private sizeLine = 0;
  // coordinate storage
  rows: Int32Array | null = null;
  /**
   * General coordinate files start in counting mode: while rows arrive in nondecreasing order
   * (as most writers emit them) only per-row counts are kept, so the triples cost exactly the
   * CSR's bytes; the first out-of-order row rebuilds `rows` from the counts.
   */
  rowCount: Int32Array | null = null;
  cols: Int32Array | null = null;
  vals: Float64Array | null = null;
  k = 0;
  rowsSorted = true;
  private lastRow = 0;
  // array storage: dense row-major CSR values, filled column by column (k counts values)
  dense: Float64Array | null = null;
  private ai = 0;
  private aj = 0;
  // probe mode
  private probeSeen = 0;
  probeLine = -1;

  constructor(
    private readonly path: string,
    private readonly allowNonFinite: boolean,
    private readonly memoryLimit: number,
    private readonly probe?: { row: number; col: number },
    private readonly referenceOnly = false,
  ) {}

  get header(): MatrixMarketHeader {
    return { ...this.banner, nRows: this.nRows, nCols: this.nCols, nEntries: this.nEntries, comments: this.comments };
  }

  get isArray(): boolean { return this.banner.format === 'array'; }

  private err(what: string, line: number = this.line): UserError {
    return fileError(this.path, line, what);
  }

  /** Feed one chunk. Complete lines are parsed; the incomplete tail is kept for the next chunk. */
  push(chunk: Buffer): void {
    let start = 0;
    if (chunk.length > 0) this.atStart = false;
    if (this.carry !== null) {
      let t = start;
      while (t < chunk.length && chunk[t] !== LF && chunk[t] !== CR) t++;
      if (t === chunk.length) {
        this.carry = Buffer.concat([this.carry, chunk.subarray(start)]);
        if (this.carry.length > MAX_LINE_BYTES) throw this.err('line longer than 1 MiB: not a Matrix Market file');
        return;
      }
      const head = Buffer.concat([this.carry, chunk.subarray(start, t + 1)]);
      this.carry = null;
      this.region(head, 0, head.length);
      start = t + 1;
    }
    let last = chunk.length - 1;
    while (last >= start && chunk[last] !== LF && chunk[last] !== CR) last--;
    if (last >= start) this.region(chunk, start, last + 1);
    if (last + 1 < chunk.length) {
      this.carry = Buffer.from(chunk.subarray(Math.max(last + 1, start)));
      if (this.carry.length > MAX_LINE_BYTES) throw this.err('line longer than 1 MiB: not a Matrix Market file');
    }
  }

  /** End of input: parse a last line without newline, then check the counts. */
  finish(): void {
    if (this.atStart) throw fileError(this.path, undefined, 'empty file (expected a %%MatrixMarket banner)');
    if (this.carry !== null && this.carry.length > 0) {
      const tail = Buffer.concat([this.carry, Buffer.from([LF])]);
      this.carry = null;
      this.region(tail, 0, tail.length);
    }
    const lastLine = this.line - 1;
    if (this.phase === PHASE_BANNER) {
      throw fileError(this.path, undefined, 'no banner: expected a first line "%%MatrixMarket matrix coordinate real general" (not a Matrix Market file?)');
    }
    if (this.phase === PHASE_SIZE) throw this.err('file ends before the size line', lastLine);
    if (this.phase === PHASE_DATA) {
      throw this.err(`file ends after ${this.k} of the ${this.nEntries} entries declared on line ${this.sizeLine}`, lastLine);
    }
  }

  /** Parse the lines of buf[s, e); buf[e-1] is a line terminator. */
  private region(buf: Buffer, s: number, e: number): void {
    let p = s;
    if (this.skipLF) {
      this.skipLF = false;
      if (buf[p] === LF) p++;
    }
    while (p < e) {
      if (this.phase === PHASE_DATA && this.cols !== null && this.probe === undefined && !this.referenceOnly) {
        p = this.fast(buf, p, e);
        if (p >= e) break;
      }
      let q = p;
      while (buf[q] !== LF && buf[q] !== CR) q++;
      this.line1(buf, p, q);
      p = q + 1;
      if (buf[q] === CR) {
        if (p < e) { if (buf[p] === LF) p++; } else this.skipLF = true;
      }
      this.line++;
    }
  }

  private readonly st = new Float64Array(5);

  private fast(buf: Buffer, p: number, e: number): number {
    const st = this.st, b = this.banner;
    st[ST_K] = this.k; st[ST_LINE] = this.line; st[ST_LASTROW] = this.lastRow; st[ST_SORTED] = this.rowsSorted ? 1 : 0; st[ST_SKIPLF] = 0;
    const flags = (b.field === 'pattern' ? F_PATTERN : 0) | (b.field === 'integer' ? F_INTEGER : 0)
      | (b.symmetry !== 'general' ? F_LOWER : 0) | (b.symmetry === 'skew-symmetric' ? F_SKEW : 0) | (b.object === 'vector' ? F_VECTOR : 0);
    const counting = this.rowCount !== null;
    const r = coordinateLines(buf, p, e, counting ? this.rowCount! : this.rows!, this.cols!, this.vals!, st,
      this.nRows, this.nCols, this.nEntries, flags | (counting ? F_COUNT : 0));
    this.k = st[ST_K]; this.line = st[ST_LINE]; this.lastRow = st[ST_LASTROW]; this.rowsSorted = st[ST_SORTED] === 1;
    if (st[ST_SKIPLF] === 1) this.skipLF = true;
    if (this.k === this.nEntries) this.phase = PHASE_DONE;
    return r;
  }

  /** One line buf[s, q) through the reference rules (banner, comments, size line, any data line). */
  private line1(buf: Buffer, s: number, q: number): void {
    // UTF-8 byte order mark at the very start of the file (checked here, on the whole first
    // line, so a chunk boundary inside the mark does not matter)
    if (this.line === 1 && q - s >= 3 && buf[s] === 0xef && buf[s + 1] === 0xbb && buf[s + 2] === 0xbf) s += 3;
    // blank or comment lines are allowed anywhere after the banner (and blank ones before it)
    let f = s;
    while (f < q && (buf[f] === SP || buf[f] === TAB)) f++;
    if (f === q) return;
    if (this.phase === PHASE_BANNER) {
      const text = buf.toString('latin1', f, q);
      const r = parseBanner(text);
      if (!r.ok) throw this.err(r.error);
      this.banner = r.value;
      this.phase = PHASE_SIZE;
      return;
    }
    if (buf[f] === PCT) {
      if (this.phase === PHASE_SIZE) this.comments.push(buf.toString('utf8', f + 1, q));
      return;
    }
    const text = buf.toString('latin1', f, q);
    if (this.phase === PHASE_SIZE) { this.size(text); return; }
    if (this.phase === PHASE_DONE) {
      throw this.err(`more entries than the ${this.nEntries} declared on line ${this.sizeLine}`);
    }
    if (this.isArray) this.arrayLine(text);
    else this.coordinateLine(text);
  }

  private size(text: string): void {
    const r = parseSizeLine(text, this.banner);
    if (!r.ok) throw this.err(r.error);
    const { nRows, nCols, nEntries } = r.value;
    this.nRows = nRows; this.nCols = nCols; this.nEntries = nEntries; this.sizeLine = this.line;
    const b = this.banner;
    if (b.format === 'coordinate' && nEntries > MAX_INT32_INDEX) {
      throw this.err(`size line: ${nEntries} entries exceed ${MAX_INT32_INDEX} (indices are 32-bit)`);
    }
    const need = readBytesEstimate(b, nRows, nCols, nEntries);
    if (need > this.memoryLimit) {
      throw this.err(`declared size ${nRows}×${nCols} with ${nEntries} entries needs about ${fmtBytes(need)} to read, over the limit of ${fmtBytes(this.memoryLimit)} (raise it with SLABBENCH_READ_LIMIT_MB)`);
    }
    this.phase = nEntries === 0 ? PHASE_DONE : PHASE_DATA;
    if (this.probe !== undefined) return;
    if (b.format === 'coordinate') {
      if (b.symmetry === 'general') this.rowCount = new Int32Array(nRows + 1);
      else this.rows = new Int32Array(nEntries);
      this.cols = new Int32Array(nEntries);
      this.vals = new Float64Array(nEntries);
    } else {
      this.dense = new Float64Array(nRows * nCols);
      if (b.symmetry === 'skew-symmetric') { this.ai = 1; this.aj = 0; }
    }
  }

  private valueOf(tok: string): number {
    const f = this.banner.field;
    if (f === 'pattern') return 1;
    const r = parseValueToken(tok, f, this.allowNonFinite);
    if (!r.ok) throw this.err(r.error);
    return r.value;
  }

  private coordinateLine(text: string): void {
    const b = this.banner;
    const tokens = splitBlanks(text);
    const names = b.object === 'vector' ? ['index'] : ['row', 'column'];
    if (b.field !== 'pattern') names.push('value');
    if (tokens.length !== names.length) {
      const what = tokens.length > names.length && tokens[names.length].startsWith('%') ? ' (comments must be on their own line)' : '';
      throw this.err(`expected ${names.length} fields (${names.join(' ')}) for a ${b.field} ${b.object === 'vector' ? 'vector' : 'coordinate'} entry, found ${tokens.length}${what}`);
    }
    if (this.k === this.nEntries) throw this.err(`more entries than the ${this.nEntries} declared on line ${this.sizeLine}`);
    const ri = parseIndexToken(tokens[0], 'row', this.nRows);
    if (!ri.ok) throw this.err(b.object === 'vector' ? ri.error.replace(/^row index/, 'index') : ri.error);
    let col = 0;
    if (b.object !== 'vector') {
      const ci = parseIndexToken(tokens[1], 'column', this.nCols);
      if (!ci.ok) throw this.err(ci.error);
      col = ci.value;
    }
    const row = ri.value;
    const v = b.field === 'pattern' ? 1 : this.valueOf(tokens[tokens.length - 1]);
    if (b.symmetry !== 'general' && col > row) {
      throw this.err(`entry (${row + 1}, ${col + 1}) is above the diagonal: a ${b.symmetry} file stores only the lower triangle`);
    }
    if (b.symmetry === 'skew-symmetric' && col === row && v !== 0) {
      throw this.err(`diagonal entry (${row + 1}, ${col + 1}) = ${clip(tokens[2])} in a skew-symmetric file: its diagonal must be zero (and is normally omitted)`);
    }
    if (this.probe !== undefined) {
      if (row === this.probe.row && col === this.probe.col && ++this.probeSeen === 2) this.probeLine = this.line;
      this.k++;
      if (this.k === this.nEntries) this.phase = PHASE_DONE;
      return;
    }
    const k = this.k++;
    if (this.rowCount !== null && row < this.lastRow) this.leaveCountingMode();
    if (this.rowCount !== null) this.rowCount[row + 1]++;
    else this.rows![k] = row;
    this.cols![k] = col; this.vals![k] = v;
    if (row < this.lastRow) this.rowsSorted = false;
    this.lastRow = row;
    if (this.k === this.nEntries) this.phase = PHASE_DONE;
  }

  /** Rebuild the row of every entry so far from the counts (they arrived in row order). */
  private leaveCountingMode(): void {
    const counts = this.rowCount!;
    const rows = new Int32Array(this.nEntries);
    let t = 0;
    for (let r = 0; r < this.nRows; r++) for (let c = counts[r + 1]; c > 0; c--) rows[t++] = r;
    this.rows = rows;
    this.rowCount = null;
  }

  private arrayLine(text: string): void {
    const tokens = splitBlanks(text);
    if (tokens.length !== 1) {
      throw this.err(`expected 1 value per line in an array file, found ${tokens.length} fields`);
    }
    const v = this.valueOf(tokens[0]);
    const n = this.nRows, nc = this.nCols;
    const i = this.ai, j = this.aj;
    const sym = this.banner.symmetry;
    this.k++;
    if (this.dense !== null) {
      this.dense[i * nc + j] = v;
      if (sym === 'symmetric') this.dense[j * nc + i] = v;
      else if (sym === 'skew-symmetric') this.dense[j * nc + i] = -v;
    }
    // column-major cursor: general walks rows 0..n-1, symmetric j..n-1, skew j+1..n-1
    this.ai++;
    if (this.ai === n) {
      this.aj++;
      this.ai = sym === 'general' ? 0 : sym === 'symmetric' ? this.aj : this.aj + 1;
    }
    if (this.aj === nc || (sym !== 'general' && this.ai >= n)) this.phase = PHASE_DONE;
  }
}

const F_PATTERN = 1, F_INTEGER = 2, F_LOWER = 4, F_SKEW = 8, F_VECTOR = 16, F_COUNT = 32;
const ST_K = 0, ST_LINE = 1, ST_LASTROW = 2, ST_SORTED = 3, ST_SKIPLF = 4;

/**
 * Fast path over coordinate data lines (a free function on typed arrays: state goes in and out
 * through `st`, so V8's optimized loop never depends on the parser object's shape). Returns the
 * position of the first line it does not handle (left to line1) or e. Every line in [p, e) ends with a terminator, so no bounds checks.
 */
function coordinateLines(
  buf: Buffer, p: number, e: number, rows: Int32Array, cols: Int32Array, vals: Float64Array, st: Float64Array,
  nRows: number, nCols: number, nEntries: number, flags: number,
): number {
  const pattern = (flags & F_PATTERN) !== 0, integer = (flags & F_INTEGER) !== 0;
  const lowerOnly = (flags & F_LOWER) !== 0, skew = (flags & F_SKEW) !== 0, vector = (flags & F_VECTOR) !== 0;
  // counting mode: `rows` holds per-row counts (index row+1) instead of one row per entry
  const counting = (flags & F_COUNT) !== 0;
  let k = st[ST_K] | 0, line = st[ST_LINE], lastRow = st[ST_LASTROW] | 0, rowsSorted = st[ST_SORTED] | 0;
  let lineStart = p;
  while (p < e) {
    let c = buf[p];
    while (c === SP || c === TAB) c = buf[++p];
    if (c === LF || c === CR || c === PCT || k === nEntries) break;
    // row index
    let i = 0, nd = 0;
    while (c >= D0 && c <= D9) { i = i * 10 + (c - D0); nd++; c = buf[++p]; }
    if (nd === 0 || nd > 10 || (c !== SP && c !== TAB)) break;
    while (c === SP || c === TAB) c = buf[++p];
    let j = 1;
    if (!vector) {
      j = 0; nd = 0;
      while (c >= D0 && c <= D9) { j = j * 10 + (c - D0); nd++; c = buf[++p]; }
      if (nd === 0 || nd > 10) break;
      if (!pattern) {
        if (c !== SP && c !== TAB) break;
        while (c === SP || c === TAB) c = buf[++p];
      }
    }
    let v = 1;
    if (!pattern) {
      const tokStart = p;
      let neg = false;
      if (c === MINUS) { neg = true; c = buf[++p]; } else if (c === PLUS) c = buf[++p];
      // mantissa: first 15 significant digits in m, up to 4 more in mB (nB of them); both exact
      let m = 0, mB = 0, nB = 0, sig = 0, exp = 0, any = false;
      while (c >= D0 && c <= D9) {
        any = true;
        if (m !== 0 || c !== D0) {
          if (sig < 15) m = m * 10 + (c - D0); else { mB = mB * 10 + (c - D0); nB++; }
          sig++;
        }
        c = buf[++p];
      }
      if (c === DOT) {
        if (integer) break;
        c = buf[++p];
        while (c >= D0 && c <= D9) {
          any = true;
          if (m !== 0 || c !== D0) {
            if (sig < 15) m = m * 10 + (c - D0); else { mB = mB * 10 + (c - D0); nB++; }
            sig++;
          }
          exp--;
          c = buf[++p];
        }
      }
      if (!any || (integer && sig > 15)) break;
      if (c === 101 || c === 69) { // e E
        if (integer) break;
        c = buf[++p];
        let eneg = false;
        if (c === MINUS) { eneg = true; c = buf[++p]; } else if (c === PLUS) c = buf[++p];
        let x = 0, ed = 0;
        while (c >= D0 && c <= D9) { x = x * 10 + (c - D0); ed++; c = buf[++p]; }
        if (ed === 0 || ed > 4) break;
        exp += eneg ? -x : x;
      }
      if (m === 0) v = 0;
      else {
        // value = (m·10^nB + mB)·10^exp, correctly rounded; false asks for the string fallback
        DEC[0] = m; DEC[1] = mB;
        if (sig <= 19 && decimalToDouble(nB, exp)) v = DEC[2];
        else {
          // Token grammar already checked byte by byte; Number() rounds like the reference path.
          v = Number(buf.toString('latin1', neg || buf[tokStart] === PLUS ? tokStart + 1 : tokStart, p));
          if (v === Infinity) break;
        }
      }
      if (neg) v = -v;
    }
    while (c === SP || c === TAB) c = buf[++p];
    if (c !== LF && c !== CR) break;
    if (i < 1 || i > nRows || j < 1 || j > nCols) break;
    if (lowerOnly && (j > i || (skew && i === j))) break;
    // accept
    i--; j--;
    if (counting) {
      if (i < lastRow) break; // leave counting mode on the reference path
      rows[i + 1]++;
    } else rows[k] = i;
    cols[k] = j; vals[k] = v; k++;
    if (i < lastRow) rowsSorted = 0;
    lastRow = i;
    p++;
    if (c === CR) {
      if (p < e) { if (buf[p] === LF) p++; } else { st[ST_SKIPLF] = 1; }
    }
    line++;
    // State is published after every line, inside the loop: code after the loop runs once per
    // region, too rarely for V8 to keep type feedback on it, and any operation there made the
    // optimized loop deoptimize at each region end.
    st[ST_K] = k; st[ST_LINE] = line; st[ST_LASTROW] = lastRow; st[ST_SORTED] = rowsSorted;
    lineStart = p;
  }
  return lineStart;
}


/**
 * Plain file in 1 MiB pieces read into ONE reused buffer: the parser consumes each piece before
 * the next read, and a stream's fresh buffer per chunk would sit as garbage (tens of MB of
 * external memory) until a GC happens to run.
 */
async function* readPlain(path: string): AsyncGenerator<Buffer> {
  const fh = await fsp.open(path, 'r');
  try {
    const buf = Buffer.allocUnsafe(1 << 20);
    for (;;) {
      const { bytesRead } = await fh.read(buf, 0, buf.length, null);
      if (bytesRead === 0) return;
      yield buf.subarray(0, bytesRead);
    }
  } finally {
    await fh.close();
  }
}

/** Open a file as bytes, gunzipping when named .gz or when it starts with 1f 8b. */
async function openBytes(path: string): Promise<AsyncIterable<Buffer>> {
  let head: Buffer;
  try {
    const fh = await fsp.open(path, 'r');
    try {
      const st = await fh.stat();
      if (st.isDirectory()) throw fileError(path, undefined, 'is a directory, expected a Matrix Market file');
      head = Buffer.alloc(2);
      const { bytesRead } = await fh.read(head, 0, 2, 0);
      head = head.subarray(0, bytesRead);
    } finally {
      await fh.close();
    }
  } catch (e) {
    throw asUserError(e, path);
  }
  const gzMagic = head.length === 2 && head[0] === 0x1f && head[1] === 0x8b;
  if (path.toLowerCase().endsWith('.gz') && !gzMagic && head.length > 0) {
    throw fileError(path, undefined, 'name ends with .gz but the content is not gzip data (no 1f 8b magic bytes)');
  }
  if (!gzMagic) return readPlain(path);
  const file = createReadStream(path, { highWaterMark: 1 << 20 });
  return pipeline(file, createGunzip({ chunkSize: 1 << 18 }), () => undefined);
}

function asUserError(e: unknown, path: string): unknown {
  if (e instanceof UserError) return e;
  const err = e as NodeJS.ErrnoException;
  if (err && typeof err.code === 'string') {
    if (err.code.startsWith('Z_') || /unexpected end of file|incorrect header|invalid/i.test(err.message)) {
      return fileError(path, undefined, `corrupt or truncated gzip data (${err.message})`);
    }
    if (err.code === 'ENOENT') return fileError(path, undefined, 'no such file');
    if (err.code === 'EISDIR') return fileError(path, undefined, 'is a directory, expected a Matrix Market file');
    if (err.code === 'EACCES') return fileError(path, undefined, 'permission denied');
    return fileError(path, undefined, `cannot read (${err.code}: ${err.message})`);
  }
  return e;
}

/** Bytes of one input, openable more than once (a rejected duplicate is located by a second pass). */
export type ByteSource = () => Promise<AsyncIterable<Buffer | Uint8Array>>;

async function runParser(name: string, source: ByteSource, parser: MatrixMarketParser): Promise<void> {
  const src = await source();
  try {
    for await (const chunk of src) parser.push(Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength));
  } catch (e) {
    (src as Partial<Readable>).destroy?.();
    throw asUserError(e, name);
  }
  parser.finish();
}

/**
 * Read a Matrix Market file (matrix or vector object) into CSR: symmetric and skew-symmetric
 * storage expanded to general, columns sorted within rows, explicit zeros kept, duplicates
 * summed (or rejected). A vector object becomes an n×1 matrix. Array files give a dense CSR
 * (every position stored, zeros included). Malformed input → UserError "FILE:LINE: …".
 */
export async function readMatrixMarket(path: string, opts: ReadMatrixMarketOptions = {}): Promise<MatrixMarketFile> {
  return readMatrixMarketFrom(path, () => openBytes(path), opts);
}

/**
 * The reader over any byte source; `name` stands for the file in messages. Tests feed it
 * buffers split at arbitrary points to exercise chunk boundaries.
 */
export async function readMatrixMarketFrom(name: string, source: ByteSource, opts: ReadMatrixMarketOptions = {}): Promise<MatrixMarketFile> {
  const path = name;
  const duplicates = opts.duplicates ?? 'sum';
  const allowNonFinite = opts.allowNonFinite ?? false;
  const limit = opts.memoryLimitBytes ?? defaultReadLimitBytes();
  const parser = new MatrixMarketParser(path, allowNonFinite, limit, undefined, opts.referenceOnly ?? false);
  await runParser(path, source, parser);
  const header = parser.header;
  const { nRows, nCols } = header;
  if (header.format === 'array') {
    const dense = parser.dense ?? new Float64Array(0);
    const rowPtr = new Int32Array(nRows + 1);
    const colInd = new Int32Array(nRows * nCols);
    for (let i = 0; i < nRows; i++) {
      rowPtr[i + 1] = (i + 1) * nCols;
      for (let j = 0; j < nCols; j++) colInd[i * nCols + j] = j;
    }
    return { header, csr: { nRows, nCols, rowPtr, colInd, values: dense } };
  }
  const nnz = parser.k;
  const rowCount = parser.rowCount;
  const rows = parser.rows ?? new Int32Array(0);
  const cols = parser.cols ?? new Int32Array(0);
  const vals = parser.vals ?? new Float64Array(0);
  parser.rows = parser.cols = parser.rowCount = null;
  parser.vals = null;
  let asm;
  if (header.symmetry === 'general') {
    asm = rowCount !== null
      ? assembleRowOrdered(nRows, rowCount, cols, vals, nnz, duplicates)
      : assembleGeneral(nRows, rows, cols, vals, nnz, parser.rowsSorted, duplicates);
  } else {
    const total = expandedCount(rows, cols, nnz);
    if (total > MAX_INT32_INDEX) {
      throw fileError(path, undefined, `expanding the ${header.symmetry} storage gives ${total} entries, over ${MAX_INT32_INDEX} (indices are 32-bit)`);
    }
    asm = assembleSymmetric(nRows, rows, cols, vals, nnz, header.symmetry === 'skew-symmetric', duplicates);
  }
  if (asm.duplicate !== undefined) {
    const { row, col } = asm.duplicate;
    // Stored position (symmetric files give the pair in the lower triangle).
    const sr = header.symmetry === 'general' ? row : Math.max(row, col);
    const sc = header.symmetry === 'general' ? col : Math.min(row, col);
    const probe = new MatrixMarketParser(path, allowNonFinite, limit, { row: sr, col: sc });
    await runParser(path, source, probe);
    const where = probe.probeLine > 0 ? probe.probeLine : undefined;
    throw fileError(path, where, `entry (${sr + 1}, ${sc + 1}) appears more than once (duplicates are rejected; by default they are summed)`);
  }
  return { header, csr: { nRows, nCols, rowPtr: asm.rowPtr, colInd: asm.colInd, values: asm.values } };
}

/**
 * Read a right-hand side: a `vector` object (array or coordinate) or an n×1 matrix, as a dense
 * Float64Array (coordinate entries not listed are 0).
 */
export async function readMatrixMarketVector(path: string, opts: ReadMatrixMarketOptions = {}): Promise<Float64Array> {
  const { header, csr } = await readMatrixMarket(path, opts);
  if (csr.nCols !== 1) {
    throw fileError(path, undefined, `expected a vector (vector object or n×1 matrix), found a ${csr.nRows}×${csr.nCols} matrix`);
  }
  void header;
  return denseColumns(csr)[0];
}

/** The columns of a matrix as dense arrays (entries not stored are 0). */
function denseColumns(csr: Csr): Float64Array[] {
  const cols: Float64Array[] = [];
  for (let j = 0; j < csr.nCols; j++) cols.push(new Float64Array(csr.nRows));
  for (let i = 0; i < csr.nRows; i++) {
    for (let k = csr.rowPtr[i]; k < csr.rowPtr[i + 1]; k++) cols[csr.colInd[k]][i] = csr.values[k];
  }
  return cols;
}

/**
 * Read dense columns: a `vector` object (array or coordinate), an n×1 matrix (array or
 * coordinate; coordinate entries not listed are 0), or an n×k `array` matrix (dense columns, k ≥ 1),
 * one Float64Array per column. A coordinate matrix with more than one column is refused (it is
 * most likely a sparse matrix given by mistake).
 */
export async function readMatrixMarketColumns(path: string, opts: ReadMatrixMarketOptions = {}): Promise<Float64Array[]> {
  const { header, csr } = await readMatrixMarket(path, opts);
  if (csr.nCols !== 1 && header.format !== 'array') {
    throw fileError(path, undefined, `expected a vector, an n×1 matrix or an n×k array (dense columns), found a ${csr.nRows}×${csr.nCols} coordinate matrix`);
  }
  return denseColumns(csr);
}
