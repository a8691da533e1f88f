/**
 * Front-aligned mesh map: concentrates the lattice points of one space axis at a moving planar
 * front x·n = x₀ + s·t and lets the lattice lines there travel with it, so the elements at the front
 * are thin across its space-time trajectory and long along it (anisotropic, characteristic-aligned
 * simplices when s·n is the transport velocity).
 *
 * Only the coordinate of the mapped axis k (the one with the largest |n_k|) moves; time levels are
 * untouched, so slab interfaces stay flat t = const and the block-triangular slab structure stays.
 * Per lattice row (the other coordinates fixed) and time level the front crosses axis k at
 *   c(x_⊥, t) = (x₀ + s_rel·t − Σ_{j≠k} n_j x_j) / n_k,   s_rel = s − σ·n,
 * σ the mesh shear, applied after this map (so the front is where the options say in the final,
 * sheared coordinates).
 *
 * Spacing: geometric grading away from the front (cell size × r per cell, the common boundary-layer
 * practice), h(u) = min(H, h₀ + (r − 1)|u|) at distance u from the front, h₀ the front spacing set
 * by the target aspect ratio, H the far-field cap chosen so the N cells of the axis fill it exactly
 * (a side with more cells than the grading needs gets H < h₀: uniform cells finer than h₀).
 * The lattice index at distance u is the cell count Φ(u) = ∫₀ᵘ du'/h(u') (closed form: a logarithm
 * while h grows, linear once capped), inverted in closed form.
 *
 *  - Non-periodic axis k: per row and time level x ↦ c + Φ⁻¹(j·I/N − Φ(c)), I = Φ(L−c) + Φ(c), so
 *    x = 0 and x = L stay put (the box is kept) and the front may lie anywhere, inside or not;
 *    the lines near the front move with it at speed s_rel(1 − h₀/h(−c)), nearly its own.
 *  - Periodic axis k: the graded lattice of the circle (front at 0, far side at ±L/2) translates
 *    with the front, x = c(x_⊥, t) + G(j − j_c): the lines follow the front exactly, and the two
 *    copies of a periodic vertex stay L apart.
 *
 * Without jitter the map cannot invert an element: a Kuhn simplex spans one time step along one of
 * its edges, so its determinant is Δt times the determinant of its spatial edges, each along one
 * lattice axis j plus a shift along k; that matrix is triangular with diagonal (Δx_k > 0, h_j), so
 * every element keeps the orientation of its Kuhn permutation. With jitter it is checked (see
 * checkElementOrientation in quality.ts) and an inverted element is refused.
 */
import { UserError } from '../util/errors.js';
import { kuhnPermutations, kuhnVertexOffsets } from './kuhn.js';
import { simplexAspectRatio } from './quality.js';

/** The map's options in the final (sheared) coordinates; see SlabMeshOptions.front. */
export interface FrontMapOptions {
  /** Front normal n in space (d entries, not all zero; normalized here). */
  direction: number[];
  /** x₀ in x·n = x₀ + s·t (n normalized). */
  position: number;
  /** Front speed s along n. */
  speed: number;
  /** Geometric growth ratio r of the cell size per cell away from the front, 1 < r ≤ 3. */
  grading: number;
  /** Target aspect ratio of the elements at the front (quality.ts), 1 < A ≤ 1000. */
  aspectRatio: number;
}

export const MAX_FRONT_ASPECT_RATIO = 1000;
export const MAX_FRONT_GRADING = 3;

/** What the map resolved to (layout provenance). */
export interface FrontMapSummary {
  /** Mapped space axis k. */
  axis: number;
  /** Unit normal n. */
  direction: number[];
  position: number;
  speed: number;
  grading: number;
  aspectRatio: number;
  /** Width along axis k of the cells on either side of the front (lattice lines on the front). */
  frontSpacing: number;
}

/** Mesh facts the map needs (a subset of the normalized SlabMeshOptions). */
export interface FrontMapMesh {
  dim: number;
  cells: number[];
  extent: number[];
  periodic: boolean[];
  shear: number[];
  /** Time extent of one element layer. */
  layerThickness: number;
}

/** One axis' spacing profile: h(u) = min(cap, h0 + g·|u|), g = r − 1. */
interface Profile { h0: number; g: number; cap: number; uCap: number; phiCap: number }

function profile(h0: number, g: number, cap: number): Profile {
  if (cap <= h0) return { h0, g, cap, uCap: 0, phiCap: 0 }; // uniform, finer than h0 (a side with more cells than grading needs)
  const uCap = (cap - h0) / g;
  return { h0, g, cap, uCap, phiCap: Math.log1p((g * uCap) / h0) / g };
}

/** Φ(u): cells between the front and signed distance u. */
function phi(p: Profile, u: number): number {
  const a = Math.abs(u);
  const v = a <= p.uCap ? Math.log1p((p.g * a) / p.h0) / p.g : p.phiCap + (a - p.uCap) / p.cap;
  return u < 0 ? -v : v;
}

/** Φ⁻¹(φ). */
function phiInverse(p: Profile, f: number): number {
  const a = Math.abs(f);
  const u = a <= p.phiCap ? (p.h0 * Math.expm1(p.g * a)) / p.g : p.uCap + (a - p.phiCap) * p.cap;
  return f < 0 ? -u : u;
}

/** The cap H whose profile puts exactly m cells in a distance a from the front (bisection on log H; feasible: Φ∞(a) ≤ m). */
function capFor(h0: number, g: number, a: number, m: number): Profile {
  let lo = Math.log(Math.min(h0, a / m)), hi = Math.log(h0 + g * a + a); // below lo: uniform a/m or finer; beyond hi: never capped
  for (let it = 0; it < 200 && hi - lo > 1e-15 * Math.max(1, Math.abs(hi)); it++) {
    const mid = 0.5 * (lo + hi);
    if (phi(profile(h0, g, Math.exp(mid)), a) > m) lo = mid; else hi = mid;
  }
  return profile(h0, g, Math.exp(hi));
}

/**
 * Front spacing h₀ that gives the front elements the target aspect ratio: the front box (edge h₀
 * along k, the other cell edges shifted along k to lie in the front, the time edge moving with the
 * front) is cut into its D! Kuhn simplices, and h₀ is rescaled until their largest aspect ratio is
 * the target (it grows like 1/h₀ for thin boxes; a few fixed-point steps).
 */
function frontSpacing(m: FrontMapMesh, k: number, n: number[], sRel: number, target: number): number {
  const d = m.dim;
  const D = d + 1;
  const edges = new Float64Array(D * D); // edge a (lattice axis a) in column a
  const h = m.extent.map((L, a) => L / m.cells[a]);
  const setEdges = (h0: number): void => {
    edges.fill(0);
    for (let a = 0; a < d; a++) {
      if (a === k) { edges[k * D + a] = h0; continue; }
      edges[a * D + a] = h[a];
      edges[k * D + a] = (-n[a] / n[k]) * h[a];
    }
    // time edge: Δt along t, the front's motion along k, the shear along every axis
    for (let i = 0; i < d; i++) edges[i * D + d] = m.shear[i] * m.layerThickness;
    edges[k * D + d] += (sRel / n[k]) * m.layerThickness;
    edges[d * D + d] = m.layerThickness;
  };
  const perms = kuhnPermutations(D);
  const offsets = kuhnVertexOffsets(D);
  const nKuhn = perms.length / D;
  const verts = new Float64Array((D + 1) * D);
  const worst = (h0: number): number => {
    setEdges(h0);
    let maxAr = 0;
    for (let s = 0; s < nKuhn; s++) {
      for (let j = 0; j <= D; j++) {
        for (let i = 0; i < D; i++) {
          let x = 0;
          for (let a = 0; a < D; a++) x += edges[i * D + a] * offsets[(s * (D + 1) + j) * D + a];
          verts[j * D + i] = x;
        }
      }
      maxAr = Math.max(maxAr, simplexAspectRatio(verts, D));
    }
    return maxAr;
  };
  let h0 = h[k];
  for (let it = 0; it < 30; it++) {
    const ar = worst(h0);
    const next = h0 * (ar / target);
    if (Math.abs(next - h0) <= 1e-12 * h0) break;
    h0 = next;
  }
  return h0;
}

/** A prepared map: moves the coordinate of axis k of each vertex. */
export interface FrontMap {
  readonly summary: FrontMapSummary;
  /**
   * Mapped coordinate along axis k (before the shear) of a vertex with jittered lattice index j
   * (0…N, in cell units) on axis k, the other pre-shear space coordinates x (full vector, entry k
   * ignored) and time t. `onSide`: the vertex lies on a non-periodic side of axis k (kept exactly).
   */
  position(j: number, x: Float64Array | number[], t: number, onSide: boolean): number;
}

/**
 * Validates the options against the mesh and prepares the map. `name(field)` labels errors
 * (e.g. "mesh option front.aspectRatio"). Everything that can fail is checked here, before any
 * vertex moves.
 */
export function prepareFrontMap(opts: FrontMapOptions, m: FrontMapMesh, name: (field: string) => string, finalTime: number): FrontMap {
  const d = m.dim;
  const fail = (field: string, what: string): never => { throw new UserError(`${name(field)}: ${what}`); };
  const dir = opts.direction;
  if (!Array.isArray(dir) || dir.length !== d || !dir.every((v) => typeof v === 'number' && Number.isFinite(v))) {
    fail('direction', `expected ${d} finite numbers (the front normal), got ${JSON.stringify(dir)}`);
  }
  const norm = Math.hypot(...dir);
  if (!(norm > 0)) fail('direction', 'expected a nonzero normal, got all zeros');
  const n = dir.map((v) => v / norm);
  for (const [field, v] of [['position', opts.position], ['speed', opts.speed]] as const) {
    if (typeof v !== 'number' || !Number.isFinite(v)) fail(field, `expected a finite number, got ${String(v)}`);
  }
  if (typeof opts.grading !== 'number' || !(opts.grading > 1 && opts.grading <= MAX_FRONT_GRADING)) {
    fail('grading', `expected a growth ratio of the cell size per cell, 1 < r ≤ ${MAX_FRONT_GRADING}, got ${String(opts.grading)}`);
  }
  if (typeof opts.aspectRatio !== 'number' || !(opts.aspectRatio > 1 && opts.aspectRatio <= MAX_FRONT_ASPECT_RATIO)) {
    fail('aspectRatio', `expected a target aspect ratio 1 < A ≤ ${MAX_FRONT_ASPECT_RATIO}, got ${String(opts.aspectRatio)}`);
  }
  let k = 0;
  for (let a = 1; a < d; a++) if (Math.abs(n[a]) > Math.abs(n[k])) k = a;
  const axisName = 'xyz'[k];
  for (let a = 0; a < d; a++) {
    if (a !== k && m.periodic[a] && Math.abs(n[a]) > 1e-12) {
      fail('direction', `a front tilted towards the periodic axis ${'xyz'[a]} does not wrap onto itself; give a normal with no ${'xyz'[a]} component or make that axis non-periodic`);
    }
  }
  let sigmaN = 0;
  for (let a = 0; a < d; a++) sigmaN += m.shear[a] * n[a];
  const sRel = opts.speed - sigmaN;
  const g = opts.grading - 1;
  const L = m.extent[k];
  const N = m.cells[k];
  const uniform = L / N;
  // width of the first cell on either side of the front (the front sits on a lattice line):
  // ∫ over one cell of the profile, Φ⁻¹(1) = h₀·(e^g − 1)/g
  const w1 = frontSpacing(m, k, n, sRel, opts.aspectRatio);
  if (!(w1 < uniform)) {
    fail('aspectRatio', `the elements at the front of the uniform mesh already reach about ${opts.aspectRatio} (front cell ${w1.toPrecision(3)} ≥ cell size ${uniform.toPrecision(3)} along ${axisName}); give a larger target`);
  }
  const h0 = (w1 * g) / Math.expm1(g);
  // Range of the crossing over the rows (box corners) and (0, T).
  let cLo = Infinity, cHi = -Infinity;
  const corner = new Array<number>(d).fill(0);
  for (let mask = 0; mask < 1 << (d + 1); mask++) {
    for (let a = 0; a < d; a++) corner[a] = mask & (1 << a) ? m.extent[a] : 0;
    const t = mask & (1 << d) ? finalTime : 0;
    let c = opts.position + sRel * t;
    for (let a = 0; a < d; a++) if (a !== k) c -= n[a] * corner[a];
    c /= n[k];
    cLo = Math.min(cLo, c); cHi = Math.max(cHi, c);
  }
  const uncapped = profile(h0, g, Infinity);
  const tooFew = (need: number): never => fail('grading', `grading ${opts.grading} from the front spacing ${h0.toPrecision(3)} (aspect ratio ${opts.aspectRatio}) needs ${Math.ceil(need)} cells along ${axisName}, the mesh has ${N}; raise the grading or the cells, or lower the aspect ratio`);
  /** Lattice index of the front (fixed over rows and time levels), from the cells each side needs. */
  let jc: number;
  if (m.periodic[k]) {
    const need = 2 * phi(uncapped, L / 2);
    if (need > N) tooFew(need);
    jc = 0; // set below
  } else {
    if (!(cLo > 0 && cHi < L)) {
      fail('position', `the front crosses ${axisName} at ${cLo.toPrecision(4)} … ${cHi.toPrecision(4)} over the rows and (0, T); the map needs it inside (0, ${L}) throughout (check frontPosition, frontSpeed, the slabs)`);
    }
    const lo = phi(uncapped, cHi);
    const hi = N - phi(uncapped, L - cLo);
    if (!(lo <= hi)) tooFew(phi(uncapped, cHi) + phi(uncapped, L - cLo));
    // nearest to where the uniform lattice has the front's mean crossing; a lattice line if possible
    jc = Math.min(hi, Math.max(lo, (N * 0.5 * (cLo + cHi)) / L));
    if (Math.round(jc) >= lo && Math.round(jc) <= hi) jc = Math.round(jc);
  }
  const summary: FrontMapSummary = {
    axis: k, direction: n, position: opts.position, speed: opts.speed, grading: opts.grading, aspectRatio: opts.aspectRatio, frontSpacing: w1,
  };
  const crossing = (x: Float64Array | number[], t: number): number => {
    let c = opts.position + sRel * t;
    for (let a = 0; a < d; a++) if (a !== k) c -= n[a] * x[a];
    return c / n[k];
  };
  if (m.periodic[k]) {
    const p = capFor(h0, g, L / 2, N / 2);
    const S = 2 * phi(p, L / 2); // cells of the circle under p (N up to the bisection tolerance)
    const G = (mIdx: number): number => {
      const q = Math.round(mIdx / N);
      return phiInverse(p, ((mIdx - q * N) * S) / N) + q * L;
    };
    // lattice line of the front: the one that puts line 0 of row x_⊥ = 0 nearest to x ≡ 0 (mod L) at t = 0
    const c0 = crossing(new Array<number>(d).fill(0), 0);
    const c0w = c0 - L * Math.floor(c0 / L);
    jc = Math.round((phi(p, c0w - L / 2 < 0 ? c0w : c0w - L) * N) / S + (c0w - L / 2 < 0 ? 0 : N));
    return {
      summary,
      position(j, x, t) { return crossing(x, t) + G(j - jc); },
    };
  }
  // Non-periodic: jc cells on the low side of the front, N − jc on the high side, each side graded
  // from the front with its own cap; near the front both profiles are the uncapped one, so the
  // lines there sit at the same distances from it in every row and time level.
  let lastC = NaN;
  let left = uncapped, right = uncapped;
  return {
    summary,
    position(j, x, t, onSide) {
      if (onSide) return j <= 0 ? 0 : L;
      const c = crossing(x, t);
      if (c !== lastC) { left = capFor(h0, g, c, jc); right = capFor(h0, g, L - c, N - jc); lastC = c; }
      return j <= jc ? c - phiInverse(left, jc - j) : c + phiInverse(right, j - jc);
    },
  };
}
