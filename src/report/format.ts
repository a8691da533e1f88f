/** Number formatting shared by the terminal table, the HTML report and `estimate`. */

const BYTE_UNITS = ['B', 'KiB', 'MiB', 'GiB', 'TiB', 'PiB'] as const;

/** Bytes in binary units with three significant digits: 512 B, 1.50 KiB, 12.3 GiB, 1.47 TiB. */
export function formatBytes(bytes: number): string {
  if (!Number.isFinite(bytes)) return '–';
  if (bytes < 0) return `-${formatBytes(-bytes)}`;
  let u = 0;
  let v = bytes;
  while (v >= 1024 && u < BYTE_UNITS.length - 1) {
    v /= 1024;
    u++;
  }
  if (u === 0) return `${Math.round(v)} B`;
  // toPrecision(3) may round 1023.9 up to "1.02e+3"; keep it readable.
  const digits = v >= 100 ? 0 : v >= 10 ? 1 : 2;
  return `${v.toFixed(digits)} ${BYTE_UNITS[u]}`;
}

/** Seconds with three significant digits; tiny values in exponent form. */
export function formatSeconds(s: number): string {
  if (!Number.isFinite(s)) return '–';
  if (s === 0) return '0';
  if (Math.abs(s) < 1e-3) return s.toExponential(1);
  if (Math.abs(s) >= 1000) return s.toFixed(0);
  return s.toPrecision(3);
}

/** A relative residual: 3.21e-9. */
export function formatResidual(r: number): string {
  if (Number.isNaN(r)) return 'NaN';
  if (!Number.isFinite(r)) return r > 0 ? 'Inf' : '-Inf';
  if (r === 0) return '0';
  return r.toExponential(2).replace('e+', 'e');
}

/** Integer with thin grouping: 1 234 567 (space-grouped, no locale dependence). */
export function formatCount(n: number): string {
  if (!Number.isFinite(n)) return '–';
  const s = Math.round(Math.abs(n)).toString();
  const grouped = s.replace(/\B(?=(\d{3})+(?!\d))/g, ' ');
  return n < 0 ? `-${grouped}` : grouped;
}

/** Bytes with one more digit for detailed listings (`inspect`, `solve`): 191.3 KiB, 2.25 KiB. */
export function formatBytesDetailed(n: number): string {
  if (n < 1024) return `${n} B`;
  const units = ['KiB', 'MiB', 'GiB', 'TiB'];
  let v = n / 1024, u = 0;
  while (v >= 1024 && u < units.length - 1) { v /= 1024; u++; }
  return `${v.toFixed(v < 10 ? 2 : 1)} ${units[u]}`;
}

/** A number with `digits` significant digits, plain in [1e-3, 1e6) and exponent form outside. */
export function formatNumber(x: number, digits = 3, nanText = 'NaN'): string {
  if (Number.isNaN(x)) return nanText;
  if (!Number.isFinite(x)) return x > 0 ? '∞' : '−∞';
  if (x === 0) return '0';
  const a = Math.abs(x);
  return a >= 1e-3 && a < 1e6 ? String(Number(x.toPrecision(digits))) : x.toExponential(digits - 1);
}

/** Pretty JSON with NaN and ±Infinity written as null, so the output parses anywhere. */
export function jsonNonFiniteAsNull(value: unknown): string {
  return JSON.stringify(value, (_k, v: unknown) => (typeof v === 'number' && !Number.isFinite(v) ? null : v), 2);
}
