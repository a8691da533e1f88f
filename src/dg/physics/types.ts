/**
 * What the space-time DG assembler needs from a physics. Every function is evaluated at a
 * space-time point X = (x_1, …, x_d, t) stored at X[xo …]; D = d + 1 is the space-time dimension.
 * The PDE is the space-time divergence form  ∂_t u + Σ_k ∂_{x_k} F_k(u) = ν Δ_x u,
 * i.e. ∇_{x,t}·G(u) = ν Δ_x u with the space-time flux G(u) = (F_1(u), …, F_d(u), u).
 */

export type PhysicsName = 'advection' | 'advection-diffusion' | 'acoustics' | 'burgers' | 'euler';

/** Options shared by every physics, already validated. */
export interface PhysicsContext {
  readonly dim: 1 | 2 | 3;
  readonly extent: readonly number[];
  readonly periodic: readonly boolean[];
  /** Label prefix for error messages (e.g. "option" or "suite.json: matrices[1].generate"). */
  readonly label: (field: string) => string;
}

interface PhysicsCommon {
  readonly name: PhysicsName;
  readonly nEquations: number;
  /** Largest characteristic speed |dF/du·ν| over the domain (sampled at t = 0 for expressions). */
  readonly maxWaveSpeed: number;
  /** A constant transport velocity (d comps) the mesh may be sheared along ("align"), or null. */
  readonly alignVelocity: readonly number[] | null;
  /** Velocity used to orient faces for the downstream ordering (d comps written to out). */
  transportVelocity(X: Float64Array, xo: number, out: Float64Array): void;
  /** Exterior state on t = 0 faces (the initial condition), nEquations values. */
  initialData(X: Float64Array, xo: number, out: Float64Array): void;
  /** Exterior state on space-boundary faces (inflow data), nEquations values. */
  boundaryData(X: Float64Array, xo: number, out: Float64Array): void;
  /** Exact solution, when known. */
  readonly exact: ((X: Float64Array, xo: number, out: Float64Array, element?: number) => void) | null;
  /**
   * Linearization state (nonlinear physics): the matrix is the Jacobian there. null = linear, state 0.
   * `element` (when the caller knows it) goes into error messages.
   */
  readonly state: ((X: Float64Array, xo: number, out: Float64Array, element?: number) => void) | null;
  /** Extra polynomial degree of the integrands beyond 2p (nonlinear fluxes need more quadrature). */
  readonly extraQuadratureDegree: (order: number) => number;
  /** Facts recorded in the layout provenance (resolved defaults, exact solution used…). */
  readonly summary: Record<string, unknown>;
}

/**
 * A scalar conservation law assembled point by point: flux, its derivative and a numerical flux
 * with its two partial derivatives (so nonlinear fluxes give the exact Jacobian).
 */
export interface ScalarPhysics extends PhysicsCommon {
  readonly kind: 'scalar';
  /** Space-time flux G(u) (D comps) and dG/du (D comps) at X. */
  flux(X: Float64Array, xo: number, u: number, g: Float64Array, dg: Float64Array): void;
  /**
   * Numerical flux Ĝ·n on the unit space-time normal n (D comps, outward from the left state):
   * out[0] = H(uL, uR), out[1] = ∂H/∂uL, out[2] = ∂H/∂uR. Must reduce to the earlier-slab value
   * when n_x = 0 (slab interfaces): H = uL for n_t > 0, H = n_t·uR for n_t < 0.
   */
  numericalFlux(X: Float64Array, xo: number, uL: number, uR: number, n: Float64Array, out: Float64Array): void;
  /** Diffusion coefficient ν ≥ 0 (symmetric interior penalty in space); 0 = none. */
  readonly diffusivity: number;
}

/**
 * A linear hyperbolic system with constant coefficients, G(u)·n = A(n) u with
 * A(n) = n_t I + Σ_k n_k A_k; assembled with precomputed reference integrals (Kronecker form).
 */
export interface LinearSystemPhysics extends PhysicsCommon {
  readonly kind: 'system';
  /** A_k, k = 0..d−1, each nEquations² row-major. */
  readonly spatialMatrices: readonly Float64Array[];
  /**
   * Characteristic upwind split A(n) = A⁺ + A⁻ with A^± = R Λ^± R⁻¹ (row-major m×m outputs).
   * Must give A⁺ = I, A⁻ = 0 for n = (0, +1) and A⁺ = 0, A⁻ = −I for n = (0, −1).
   */
  upwindSplit(n: Float64Array, aPlus: Float64Array, aMinus: Float64Array): void;
}

/**
 * A nonlinear system of m conservation laws ∇_{x,t}·G(U) = 0 assembled point by point
 * (src/dg/assemble-nonlinear.ts): the space-time flux and its Jacobian, and a numerical flux with
 * both partial Jacobians, so the matrix is the exact Jacobian of the DG residual.
 */
export interface NonlinearSystemPhysics extends PhysicsCommon {
  readonly kind: 'nonlinear-system';
  /**
   * Whether a state at a point is acceptable for linearization, given its element mean (Euler:
   * density and pressure at least a tenth of the mean's); the generator scales elements of the
   * projected state toward their mean until it is (src/dg/positivity.ts). Absent: no scaling.
   */
  readonly admissible?: (U: Float64Array, mean: Float64Array) => boolean;
  /**
   * G[l·m + i] = G_{l,i}(U) for l < D (l < d: the spatial flux F_l; l = d: U itself) and
   * dG[l·m² + i·m + j] = ∂G_{l,i}/∂U_j. `element` names the element in error messages.
   */
  volumeFlux(X: Float64Array, xo: number, U: Float64Array, G: Float64Array, dG: Float64Array, element: number): void;
  /**
   * h = H(U_L, U_R; n) (m comps), dL = ∂H/∂U_L and dR = ∂H/∂U_R (row-major m×m). Must reduce to the
   * earlier-slab value when n_x = 0 (dR = 0 for n_t > 0). `face` names the face in error messages.
   */
  numericalFlux(
    X: Float64Array, xo: number, UL: Float64Array, UR: Float64Array, n: Float64Array,
    h: Float64Array, dL: Float64Array, dR: Float64Array, face: number,
  ): void;
}

export type Physics = ScalarPhysics | LinearSystemPhysics | NonlinearSystemPhysics;

/** Registry entry: one per physics file. */
export interface PhysicsDefinition {
  readonly name: PhysicsName;
  readonly description: string;
  /** Physics-specific parameter fields this physics accepts (besides the common ones). */
  readonly fields: readonly string[];
  /** Number of equations in d space dimensions. */
  nEquations(dim: 1 | 2 | 3): number;
  /**
   * Validate the physics-specific fields of a raw parameter object and return them with every
   * default filled in (JSON values only: they go into the layout provenance).
   */
  normalize(raw: Record<string, unknown>, ctx: PhysicsContext): Record<string, unknown>;
  /** Evaluate every expression on a lattice over Ω×[0, T]; UserError naming the field on NaN/∞/complex. */
  check(fields: Record<string, unknown>, ctx: PhysicsContext, finalTime: number): void;
  /** Build the physics from normalized fields. */
  create(fields: Record<string, unknown>, ctx: PhysicsContext): Physics;
}
