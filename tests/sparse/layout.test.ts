import { describe, it, expect } from 'vitest';
import { readFileSync, readdirSync, writeFileSync, existsSync } from 'node:fs';
import { join } from 'node:path';
import { UserError } from '../../src/util/errors.js';
import {
  layoutPathFor, readLayout, readLayoutFor, writeLayout, validateLayout, checkLayoutFits, LAYOUT_SCHEMA,
} from '../../src/sparse/layout.js';
import { tempDir, escapeRe } from './matrix-market-helpers.js';

const dir = tempDir('slabbench-layout-');
let n = 0;
function layoutFile(content: string): string {
  const p = join(dir, `l${n++}.layout.json`);
  writeFileSync(p, content);
  return p;
}

describe('layoutPathFor', () => {
  it.each([
    ['duct.mtx', 'duct.layout.json'],
    ['a/b/tank.mtx.gz', 'a/b/tank.layout.json'],
    ['ROOM.MTX', 'ROOM.layout.json'],
    ['plain', 'plain.layout.json'],
    ['x.mm.gz', 'x.mm.layout.json'],
  ])('%s → %s', (mtx, want) => {
    expect(layoutPathFor(mtx)).toBe(want);
  });
});

describe('readLayout / writeLayout', () => {
  it('writes schema first, offsets on one line, and reads back the same layout', () => {
    const p = join(dir, 'duct.layout.json');
    const layout = { blockSize: 6, slabOffsets: [0, 40, 80], provenance: { generator: 'duct-pulse', order: 2, note: 'invented scenario' }, mesh: [4, 4] };
    writeLayout(p, layout);
    const text = readFileSync(p, 'utf8');
    expect(text.startsWith(`{\n  "schema": "${LAYOUT_SCHEMA}",\n  "blockSize": 6,\n  "slabOffsets": [0, 40, 80],`)).toBe(true);
    expect(readLayout(p)).toEqual({ schema: LAYOUT_SCHEMA, ...layout });
    expect(readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });

  it('finds the sidecar of a matrix, or reports none', () => {
    writeLayout(join(dir, 'tank.layout.json'), { blockSize: 4 });
    expect(readLayoutFor(join(dir, 'tank.mtx.gz'))?.blockSize).toBe(4);
    expect(readLayoutFor(join(dir, 'nothing-here.mtx'))).toBeUndefined();
  });

  it('accepts a hand-written layout without schema and with only a block size', () => {
    expect(readLayout(layoutFile('{ "blockSize": 10 }')).blockSize).toBe(10);
  });

  it.each([
    ['not JSON', '{ "blockSize": 6, }', 'json', /not valid JSON \(/],
    ['JSON error on a later line', '{\n  "blockSize": 6,\n  "slabOffsets": [0, 1,]\n}', 'json', /not valid JSON \(Unexpected token/],
    ['not an object', '[1, 2]', undefined, /expected a JSON object with "blockSize", found an array/],
    ['wrong schema', '{ "schema": "slabbench-layout/9", "blockSize": 2 }', undefined, /schema: expected "slabbench-layout\/1", found "slabbench-layout\/9"/],
    ['missing blockSize', '{ "slabOffsets": [0, 2] }', undefined, /blockSize: missing/],
    ['blockSize 0', '{ "blockSize": 0 }', undefined, /blockSize: expected an integer 1..4096, found 0/],
    ['blockSize not an integer', '{ "blockSize": 2.5 }', undefined, /blockSize: expected an integer 1..4096, found 2.5/],
    ['blockSize as a string', '{ "blockSize": "6" }', undefined, /blockSize: expected an integer 1..4096, found "6"/],
    ['slabOffsets not an array', '{ "blockSize": 2, "slabOffsets": 4 }', undefined, /slabOffsets: expected an array of block-row offsets, found 4/],
    ['slabOffsets too short', '{ "blockSize": 2, "slabOffsets": [0] }', undefined, /slabOffsets: expected at least 2 entries/],
    ['slabOffsets not starting at 0', '{ "blockSize": 2, "slabOffsets": [1, 4] }', undefined, /slabOffsets\[0\]: expected 0/],
    ['slabOffsets not increasing', '{ "blockSize": 2, "slabOffsets": [0, 4, 4] }', undefined, /slabOffsets\[2\]: expected more than slabOffsets\[1\] = 4/],
    ['slabOffsets with a non-integer', '{ "blockSize": 2, "slabOffsets": [0, 1.5] }', undefined, /slabOffsets\[1\]: expected a non-negative integer, found 1.5/],
    ['provenance not an object', '{ "blockSize": 2, "provenance": "me" }', undefined, /provenance: expected an object, found "me"/],
  ])('%s → one-line error naming file and field', (_name, content, line, pattern) => {
    const p = layoutFile(content);
    let err: unknown;
    try { readLayout(p); } catch (e) { err = e; }
    expect(err).toBeInstanceOf(UserError);
    const msg = (err as Error).message;
    expect(msg).not.toContain('\n');
    // JSON.parse reports a position for some errors only; when it does, the line is named
    expect(msg).toMatch(new RegExp(`^${escapeRe(p)}${line === undefined ? '' : line === 'json' ? '(:[13])?' : `:${line}`}: `));
    expect(msg).toMatch(pattern);
  });

  it('names a missing file', () => {
    expect(() => readLayout(join(dir, 'absent.layout.json'))).toThrow(/absent\.layout\.json: no such file/);
  });

  it('refuses to write an invalid layout and leaves no file', () => {
    const p = join(dir, 'bad.layout.json');
    expect(() => writeLayout(p, { blockSize: 3, slabOffsets: [0, 2, 1] })).toThrow(/refusing to write an invalid layout: .*slabOffsets\[2\]/);
    expect(existsSync(p)).toBe(false);
  });

  it('checks a layout against its matrix: block size divides, last offset = block rows', () => {
    const l = validateLayout({ blockSize: 3, slabOffsets: [0, 2, 4] }, 'x.layout.json');
    expect(() => checkLayoutFits(l, 12, 12, 'x.layout.json')).not.toThrow();
    expect(() => checkLayoutFits(l, 13, 13, 'x.layout.json')).toThrow(/^x\.layout\.json: blockSize: 3 does not divide the matrix size 13×13$/);
    expect(() => checkLayoutFits(l, 15, 15, 'x.layout.json')).toThrow(/slabOffsets: last entry must be the number of block rows, 5, found 4/);
  });

  it('does not modify the layout object it writes', () => {
    const layout = Object.freeze({ blockSize: 2, slabOffsets: Object.freeze([0, 1, 3]) });
    writeLayout(join(dir, 'frozen.layout.json'), layout);
    expect(layout).toEqual({ blockSize: 2, slabOffsets: [0, 1, 3] });
  });
});

describe('validateLayout: zeroBlocks', () => {
  it('accepts { count, share } and names the bad part otherwise', () => {
    expect(validateLayout({ blockSize: 2, zeroBlocks: { count: 3, share: 0.25 } }, 'z.layout.json').zeroBlocks).toEqual({ count: 3, share: 0.25 });
    expect(() => validateLayout({ blockSize: 2, zeroBlocks: 3 }, 'z.layout.json')).toThrow(/z\.layout\.json: zeroBlocks: expected an object/);
    expect(() => validateLayout({ blockSize: 2, zeroBlocks: { count: -1, share: 0 } }, 'z.layout.json')).toThrow(/zeroBlocks\.count: expected a non-negative integer/);
    expect(() => validateLayout({ blockSize: 2, zeroBlocks: { count: 1, share: 1.5 } }, 'z.layout.json')).toThrow(/zeroBlocks\.share: expected a number from 0 to 1/);
  });
});

describe('layout section modes (how each block is built from a hierarchical basis)', () => {
  const ok = { nEquations: 2, arrangement: 'equation-major' as const, degrees: [0, 1, 1] };
  it('is written on its own lines with the degrees on one line, and read back', () => {
    const p = join(dir, 'modes.layout.json');
    writeLayout(p, { blockSize: 6, slabOffsets: [0, 2], modes: ok, provenance: { order: 1 } });
    const text = readFileSync(p, 'utf8');
    expect(text).toContain('"modes": {\n    "nEquations": 2,\n    "arrangement": "equation-major",\n    "degrees": [0, 1, 1]\n  },');
    expect(readLayout(p).modes).toEqual(ok);
    expect(validateLayout({ blockSize: 6, modes: { ...ok, arrangement: 'mode-major' } }, 'x').modes?.arrangement).toBe('mode-major');
  });

  it.each([
    ['not an object', [1], /^x: modes: expected an object \{ "nEquations", "arrangement", "degrees" \}, found an array$/],
    ['unknown field', { ...ok, order: 1 }, /^x: modes\.order: unknown field \(expected nEquations, arrangement, degrees\)$/],
    ['missing nEquations', { arrangement: 'equation-major', degrees: [0, 1, 1] }, /^x: modes\.nEquations: missing$/],
    ['missing degrees', { nEquations: 2, arrangement: 'equation-major' }, /^x: modes\.degrees: missing$/],
    ['nEquations 0', { ...ok, nEquations: 0 }, /^x: modes\.nEquations: expected an integer 1\.\.6 \(the block size\), found 0$/],
    ['arrangement unknown', { ...ok, arrangement: 'interleaved' }, /^x: modes\.arrangement: expected one of "equation-major", "mode-major", found "interleaved"$/],
    ['degrees not an array', { ...ok, degrees: 2 }, /^x: modes\.degrees: expected an array with the total degree of each mode, found 2$/],
    ['degrees empty', { ...ok, degrees: [] }, /^x: modes\.degrees: expected at least one mode/],
    ['degree not an integer', { ...ok, degrees: [0, 1, 1.5] }, /^x: modes\.degrees\[2\]: expected an integer 0\.\.1000, found 1\.5$/],
    ['first degree not 0', { ...ok, degrees: [1, 1, 1] }, /^x: modes\.degrees\[0\]: expected 0 \(the first mode is the constant\), found 1$/],
    ['not hierarchical', { nEquations: 1, arrangement: 'mode-major', degrees: [0, 1, 2, 1, 2, 2] }, /^x: modes\.degrees\[3\]: expected at least degrees\[2\] = 2 \(modes in hierarchical order, degree non-decreasing\), found 1$/],
    ['size mismatch', { ...ok, degrees: [0, 1] }, /^x: modes: nEquations 2 × 2 degrees = 4 unknowns per block, but blockSize is 6$/],
  ])('%s → one-line error naming the field path', (_name, modes, pattern) => {
    expect(() => validateLayout({ blockSize: 6, modes }, 'x')).toThrow(pattern);
  });
});

describe('layout field centroids (one point per block row)', () => {
  const c = { nCoordinates: 3, values: [0.125, 0.5, 0.05, 0.375, 0.5, 1e-7, -2.5, 0, 3] };
  it('is written last on one line, read back exactly, and checked against the matrix', () => {
    const p = join(dir, 'centroids.layout.json');
    writeLayout(p, { blockSize: 2, centroids: c, provenance: { order: 0 } });
    const text = readFileSync(p, 'utf8');
    expect(text).toMatch(/"centroids": \{\n {4}"nCoordinates": 3,\n {4}"values": \[0\.125, 0\.5, 0\.05, 0\.375, 0\.5, 1e-7, -2\.5, 0, 3\]\n {2}\}\n\}\n$/);
    expect(text.indexOf('"provenance"')).toBeLessThan(text.indexOf('"centroids"'));
    expect(readLayout(p).centroids).toEqual(c);
    expect(() => checkLayoutFits(readLayout(p), 6, 6, p)).not.toThrow();
    expect(() => checkLayoutFits(readLayout(p), 8, 8, p)).toThrow(/centroids\.values: expected 4 points \(one per block row\) × 3 coordinates = 12 numbers, found 9$/);
  });

  it.each([
    ['not an object', [1, 2], /^x: centroids: expected an object \{ "nCoordinates", "values" \}, found an array$/],
    ['unknown field', { ...c, axes: ['x'] }, /^x: centroids\.axes: unknown field \(expected nCoordinates, values\)$/],
    ['nCoordinates 0', { ...c, nCoordinates: 0 }, /^x: centroids\.nCoordinates: expected an integer 1\.\.4 \(coordinates per point\), found 0$/],
    ['nCoordinates 5', { ...c, nCoordinates: 5 }, /^x: centroids\.nCoordinates: expected an integer 1\.\.4/],
    ['values missing', { nCoordinates: 3 }, /^x: centroids\.values: expected a flat array of coordinates \(nCoordinates per block row\), found undefined$/],
    ['a string value', { nCoordinates: 1, values: [0, '1'] }, /^x: centroids\.values\[1\]: expected a finite number, found "1"$/],
    ['a null value (NaN in JSON)', { nCoordinates: 1, values: [0, null] }, /^x: centroids\.values\[1\]: expected a finite number, found null$/],
    ['not a multiple', { nCoordinates: 2, values: [0, 1, 2] }, /^x: centroids\.values: 3 numbers are not a multiple of nCoordinates 2$/],
  ])('%s → one-line error naming the field', (_name, centroids, pattern) => {
    expect(() => validateLayout({ blockSize: 2, centroids }, 'x')).toThrow(pattern);
  });
});
