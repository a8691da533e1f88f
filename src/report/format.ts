/** Number formatting shared by the terminal table, the HTML report and `estimate`. */

/** SI (decimal) byte units: 1 kB = 1000 B, as disk and memory vendors and most tools now print. */
const SI_BYTE_UNITS = ['B', 'kB', 'MB', 'GB', 'TB', 'PB', 'EB'] as const;

/** `digits` significant digits of a value ≥ 1 and < 1000, without exponent form: 1.50, 12.3, 123. */
function significant(v: number, digits: number): string {
  const intDigits = v >= 100 ? 3 : v >= 10 ? 2 : 1;
  return v.toFixed(Math.max(0, digits - intDigits));
}

/** Bytes in SI units with three significant digits: 512 B, 1.50 kB, 12.3 GB, 1.47 TB. */
export function formatBytes(bytes: number, digits = 3): string {
  if (!Number.isFinite(bytes)) return '–';
  if (bytes < 0) return `-${formatBytes(-bytes, digits)}`;
  if (bytes < 1000) return `${Math.round(bytes)} B`;
  let u = 0;
  let v = bytes;
  while (v >= 1000 && u < SI_BYTE_UNITS.length - 1) { v /= 1000; u++; }
  // rounding may carry to 1000 (999.7 kB → "1000 kB"): move to the next unit instead
  if (Number(significant(v, digits)) >= 1000 && u < SI_BYTE_UNITS.length - 1) { v /= 1000; u++; }
  return `${significant(v, digits)} ${SI_BYTE_UNITS[u]}`;
}

/** Seconds with three significant digits: 12.3, 0.0467, 1.60e-5 (below 1 ms in exponent form). */
export function formatSeconds(s: number): string {
  if (!Number.isFinite(s)) return '–';
  if (s === 0) return '0';
  if (Math.abs(s) < 1e-3) return s.toExponential(2).replace('e+', 'e');
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

/** Bytes with one more digit for detailed listings (`inspect`, `solve`): 191.3 kB, 2.250 kB. */
export function formatBytesDetailed(n: number): string {
  return formatBytes(n, 4);
}

/** "1 iteration", "2 iterations", "0 restarts": a count and its noun, singular only for exactly 1. */
export function plural(n: number, singular: string, pluralForm = `${singular}s`): string {
  return `${formatCount(n)} ${n === 1 ? singular : pluralForm}`;
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
