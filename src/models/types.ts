/**
 * The model catalogue is data: each dispersion model is one file exporting a `ModelTerm` that
 * declares its parameters (name, unit, meaning, default bounds, initial-guess rule), evaluates its
 * contribution with analytic partial derivatives, and states its validity and Kramers-Kronig status.
 * The catalogue (catalogue.ts) composes terms into a `DispersionModel`; nothing outside src/models
 * switches on model names.
 */

/** One fit parameter as users see it on the CLI and in JSON. */
export interface ParameterSpec {
  /** Name on the CLI/JSON contract, e.g. "Eg", "B2", "tauc-lorentz.A" in a sum. */
  name: string;
  /** Unit, e.g. "eV", "eV²", "µm²", "1" for dimensionless. */
  unit: string;
  meaning: string;
  /** Default bounds [lo, hi] the fitter enforces unless --bounds overrides them. */
  bounds: [number, number];
  /** How the automatic initial guess is obtained from the data. */
  guessRule: string;
  /** Held fixed unless the user frees it (Sellmeier A = 1, Urbach Eb). */
  fixedByDefault?: boolean;
  /** Value taken when a model is given by its parameters (a stack design) and this one is left out (Sellmeier A = 1). */
  defaultValue?: number;
}

/** The spectral grid a model is evaluated on, in the units models are written in. */
export interface SpectralGrid {
  wavelengthNm: Float64Array;
  wavelengthUm: Float64Array;
  energyEv: Float64Array;
}

/** Data handed to initial-guess rules: the measured table on its grid, as n,k and as ε. */
export interface GuessData extends SpectralGrid {
  n: Float64Array;
  k: Float64Array;
  eps1: Float64Array;
  eps2: Float64Array;
  /**
   * Linear least squares (least-squares.ts, on ml-matrix), handed in with the data by guess-data.ts: only a
   * fit guesses, so evaluating a stored model (`nkledger eval`) never loads the matrix library.
   */
  leastSquares(columns: ArrayLike<number>[], y: ArrayLike<number>): number[];
}

/** Options that change a term's parameter list. */
export interface TermOptions {
  /** Number of oscillators / Sellmeier terms, for terms that accept it. */
  terms: number;
  /** Cauchy: add the Urbach absorption tail. */
  urbach: boolean;
}

/**
 * Evaluation output: the term ADDS its value to re/im (ε1/ε2 for 'eps' terms, n/k for 'nk' terms)
 * and, when dRe/dIm are given, WRITES the partial derivatives for its own parameters
 * (dRe[j][i] = ∂re_i/∂p_j with j the term-local parameter index).
 */
export interface TermOutput {
  re: Float64Array;
  im: Float64Array;
  dRe?: Float64Array[];
  dIm?: Float64Array[];
}

/** A parameter whose contribution is linear (power 1) or quadratic (power 2) in ε: used by the
 * composite initial guess, which solves for all amplitudes at once by linear least squares. */
export interface Amplitude {
  index: number;
  power: 1 | 2;
}

/**
 * A domain constraint between two parameters of a term, as data: value(below) < factor·value(above),
 * with the parameter indices term-local. Bounds are per parameter; these are the couplings bounds cannot say
 * (Tauc-Lorentz needs C < 2·E0, else α = √(4E0² − C²) is imaginary).
 */
export interface ParameterConstraint {
  below: number;
  above: number;
  factor: number;
}

export interface ModelTerm {
  name: string;
  summary: string;
  /** What `evaluate` produces: contributions to ε (summable) or n,k directly (stands alone). */
  quantity: 'eps' | 'nk';
  /** May be added in ε to other summable terms (sharing one eps_inf). */
  summable: boolean;
  /** Needs the constant background eps_inf (added once by the catalogue). */
  usesEpsInf: boolean;
  kkConsistent: boolean;
  /**
   * Whether the term can give k > 0 (ε2 > 0). A model whose every term says false (Sellmeier, Cauchy without
   * the Urbach tail) has k ≡ 0: the fitter then leaves the k rows out, since they carry no information on
   * its parameters and would only inflate the count of points.
   */
  absorbing(options: TermOptions): boolean;
  /**
   * The term's resonances as data (term-local indices of each one's strength and position), so the fitter can
   * say "two terms describe one resonance" or "a term vanished" without knowing model names.
   */
  oscillators?(options: TermOptions): { strength: number; position: number }[];
  /** Couplings between parameters that every start value must satisfy (see ParameterConstraint). */
  constraints?(options: TermOptions): ParameterConstraint[];
  /** Validity notes printed in reports and help. */
  validity: string[];
  /** Accepts --terms N in [min, max]. */
  terms?: { min: number; max: number; meaning: string };
  /** Accepts --urbach. */
  urbach?: { meaning: string };
  parameters(options: TermOptions): ParameterSpec[];
  /** Initial guess for every parameter of this term from the data (term-local order). */
  guess(data: GuessData, options: TermOptions): number[];
  /** Amplitude parameters the composite guess may re-solve linearly (eps terms only). */
  amplitudes?(options: TermOptions): Amplitude[];
  evaluate(grid: SpectralGrid, p: Float64Array, options: TermOptions, out: TermOutput): void;
}
