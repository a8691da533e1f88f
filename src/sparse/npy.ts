/**
 * NumPy `.npy` arrays (the open format of NumPy Enhancement Proposal 1, "A simple file format
 * for NumPy arrays", versions 1.0–3.0): magic `\x93NUMPY`, major and minor version bytes, a
 * little-endian header length (2 bytes in 1.0, 4 bytes in 2.0/3.0), then an ASCII (3.0: UTF-8)
 * Python dict literal `{'descr': '<f8', 'fortran_order': False, 'shape': (3, 4), }` padded with
 * spaces, then the raw data.
 *
 * Only what sparse matrix files need is accepted: little- or big-endian integers of 1, 2, 4 and
 * 8 bytes, 4- and 8-byte floats, and byte strings (`|S…`) or 4-byte unicode strings (`<U…`) for
 * scalars such as scipy's `format` member. Every refusal is a one-line message naming the file
 * and the member.
 */
import { UserError } from '../util/errors.js';

export type NpyKind = 'int' | 'uint' | 'float' | 'bytes' | 'unicode' | 'bool';

export interface NpyArray {
  /** 'int'|'uint'|'float'|'bool' with `itemBytes`; strings carry `text`. */
  kind: NpyKind;
  itemBytes: number;
  littleEndian: boolean;
  shape: number[];
  fortranOrder: boolean;
  /** Number of items (product of shape; 1 for a 0-d array). */
  count: number;
  /** The raw item bytes (a view into the member's bytes). */
  data: Uint8Array;
}

const MAGIC = [0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]; // \x93NUMPY

/** `where` names the array in messages, e.g. "matrix.npz: member indptr.npy". */
export function parseNpy(bytes: Uint8Array, where: string): NpyArray {
  const bad = (what: string): UserError => new UserError(`${where}: ${what}`);
  if (bytes.length < 10 || MAGIC.some((m, i) => bytes[i] !== m)) throw bad('not a NumPy .npy array (magic \\x93NUMPY missing)');
  const major = bytes[6]!;
  let headerLen: number;
  let start: number;
  if (major === 1) {
    headerLen = bytes[8]! | (bytes[9]! << 8);
    start = 10;
  } else if (major === 2 || major === 3) {
    if (bytes.length < 12) throw bad('truncated .npy header');
    headerLen = (bytes[8]! | (bytes[9]! << 8) | (bytes[10]! << 16)) + bytes[11]! * 2 ** 24;
    start = 12;
  } else {
    throw bad(`.npy format version ${major}.${bytes[7]} is not supported, expected 1.0, 2.0 or 3.0`);
  }
  if (start + headerLen > bytes.length) throw bad('truncated .npy header');
  const header = new TextDecoder(major === 3 ? 'utf-8' : 'latin1').decode(bytes.subarray(start, start + headerLen));
  const descr = /'descr'\s*:\s*'([^']*)'/.exec(header)?.[1];
  const fortran = /'fortran_order'\s*:\s*(True|False)/.exec(header)?.[1];
  const shapeText = /'shape'\s*:\s*\(([^)]*)\)/.exec(header)?.[1];
  if (descr === undefined || fortran === undefined || shapeText === undefined) {
    throw bad(`unreadable .npy header ${JSON.stringify(header.trim())}, expected the keys 'descr', 'fortran_order' and 'shape'`);
  }
  const shape: number[] = [];
  for (const part of shapeText.split(',')) {
    const t = part.trim();
    if (t === '') continue;
    if (!/^\d+$/.test(t)) throw bad(`shape (${shapeText}) has a non-integer dimension "${t}"`);
    const v = Number(t);
    if (!Number.isSafeInteger(v)) throw bad(`shape dimension ${t} is too large`);
    shape.push(v);
  }
  const m = /^([<>|=])([iufbSU])(\d+)$/.exec(descr);
  if (m === null) throw bad(`dtype '${descr}' is not supported, expected integers, floats or strings (structured and object arrays are refused)`);
  const order = m[1]!;
  const code = m[2]!;
  const size = Number(m[3]);
  const kind: NpyKind = code === 'i' ? 'int' : code === 'u' ? 'uint' : code === 'f' ? 'float' : code === 'b' ? 'bool' : code === 'S' ? 'bytes' : 'unicode';
  const okSize = kind === 'float' ? size === 4 || size === 8
    : kind === 'int' || kind === 'uint' ? [1, 2, 4, 8].includes(size)
      : kind === 'bool' ? size === 1 : size >= 0;
  if (!okSize) throw bad(`dtype '${descr}' is not supported (${kind} of ${size} bytes)`);
  const itemBytes = kind === 'unicode' ? 4 * size : size;
  const count = shape.reduce((a, b) => a * b, 1);
  const dataStart = start + headerLen;
  const need = count * itemBytes;
  if (!Number.isSafeInteger(need) || dataStart + need > bytes.length) {
    throw bad(`shape (${shapeText}) of '${descr}' needs ${need} bytes of data, the member holds ${bytes.length - dataStart}`);
  }
  return {
    kind, itemBytes, littleEndian: order !== '>', shape, fortranOrder: fortran === 'True', count,
    data: bytes.subarray(dataStart, dataStart + need),
  };
}

/** The array as float64 values (ints and floats; bools as 0/1). */
export function npyToFloat64(a: NpyArray, where: string): Float64Array {
  if (a.kind === 'bytes' || a.kind === 'unicode') throw new UserError(`${where}: expected numbers, found strings`);
  const out = new Float64Array(a.count);
  const view = new DataView(a.data.buffer, a.data.byteOffset, a.data.byteLength);
  const le = a.littleEndian;
  const s = a.itemBytes;
  for (let i = 0; i < a.count; i++) out[i] = readNumber(view, i * s, a.kind, s, le);
  return out;
}

/**
 * The array as Int32 indices, refusing non-integers, negatives and values above `max`.
 * Checked before the caller allocates anything sized by these values.
 */
export function npyToIndices(a: NpyArray, where: string, max: number): Int32Array {
  if (a.kind !== 'int' && a.kind !== 'uint') throw new UserError(`${where}: expected an integer index array, found dtype ${a.kind}${a.itemBytes * 8}`);
  const out = new Int32Array(a.count);
  const view = new DataView(a.data.buffer, a.data.byteOffset, a.data.byteLength);
  const s = a.itemBytes;
  for (let i = 0; i < a.count; i++) {
    const v = readNumber(view, i * s, a.kind, s, a.littleEndian);
    if (v < 0 || v > max) throw new UserError(`${where}: entry ${i} is ${v}, expected an index from 0 to ${max}`);
    out[i] = v;
  }
  return out;
}

/** A 0-d or 1-element string array (scipy writes `format` as one byte string). */
export function npyToText(a: NpyArray, where: string): string {
  if (a.kind === 'bytes') {
    let end = a.data.length;
    while (end > 0 && a.data[end - 1] === 0) end--;
    return new TextDecoder('latin1').decode(a.data.subarray(0, end));
  }
  if (a.kind === 'unicode') {
    const view = new DataView(a.data.buffer, a.data.byteOffset, a.data.byteLength);
    let s = '';
    for (let i = 0; i + 4 <= a.data.length; i += 4) {
      const cp = view.getUint32(i, a.littleEndian);
      if (cp === 0) break;
      s += String.fromCodePoint(cp);
    }
    return s;
  }
  throw new UserError(`${where}: expected a string, found numbers`);
}

function readNumber(view: DataView, off: number, kind: NpyKind, size: number, le: boolean): number {
  if (kind === 'float') return size === 8 ? view.getFloat64(off, le) : view.getFloat32(off, le);
  if (kind === 'bool') return view.getUint8(off) === 0 ? 0 : 1;
  if (size === 1) return kind === 'int' ? view.getInt8(off) : view.getUint8(off);
  if (size === 2) return kind === 'int' ? view.getInt16(off, le) : view.getUint16(off, le);
  if (size === 4) return kind === 'int' ? view.getInt32(off, le) : view.getUint32(off, le);
  const big = kind === 'int' ? view.getBigInt64(off, le) : view.getBigUint64(off, le);
  // beyond 2^53 the value is not an index we can hold anyway; callers range-check the Number
  return big > BigInt(Number.MAX_SAFE_INTEGER) ? Number.MAX_SAFE_INTEGER : big < -BigInt(Number.MAX_SAFE_INTEGER) ? -Number.MAX_SAFE_INTEGER : Number(big);
}
