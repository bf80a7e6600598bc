/** Options and report of a dispersion-model fit. The report is plain JSON (the `nkledger fit --json` shape). */

/** What the residuals compare: n and k (default), only n, only k, or ε1 and ε2. */
export type FitTarget = 'nk' | 'n' | 'k' | 'eps';

export interface FitOptions {
  /** Model spec: a catalogue name or a sum "name+name". */
  model: string;
  terms?: number;
  urbach?: boolean;
  target?: FitTarget;
  /** Wavelength window [min, max] in nm; rows outside are ignored. */
  rangeNm?: [number, number];
  /** Parameters held fixed at the given values. */
  fix?: Record<string, number>;
  /** Start values replacing the automatic guess. */
  init?: Record<string, number>;
  /** Bounds replacing the model's defaults. */
  bounds?: Record<string, [number, number]>;
  /** Parameters fixed by default (Sellmeier A, Urbach Eb) to fit anyway. */
  free?: string[];
  /** Number of starts (1 = the automatic guess only). */
  starts?: number;
  /** Seed of the multi-start perturbations (reproducible runs). */
  seed?: number;
  /** Cap on Levenberg-Marquardt iterations per start. */
  maxIterations?: number;
  /**
   * Residual weights: 'auto' (default) uses the sigma columns when the table has them, else the n/k noise
   * ratio estimated from the data; 'relative' takes σ ∝ |value| with a floor (noise that grows with the value).
   */
  weights?: 'auto' | 'relative';
}

/**
 * A warning as data, for front doors to word (the core does not know command-line flags): `rule` names what
 * was found, `message` says it in words, `advice` the next step in words; `option` names the fit option
 * the next step involves (fix, bounds, init, terms, range, weights, starts), so the CLI can add its flag.
 */
export interface FitDiagnostic {
  rule: string;
  message: string;
  advice?: string;
  option?: 'fix' | 'bounds' | 'init' | 'terms' | 'range' | 'weights' | 'starts';
  parameters?: string[];
  value?: number;
}

export interface ParameterReport {
  value: number;
  /** 1σ standard error from cov = s²(JᵀWJ)⁻¹; null for fixed parameters. */
  stderr: number | null;
  unit: string;
  /** True when the fit ended on a bound of this parameter with the data pulling it outward: no stderr then. */
  at_bound: boolean;
}

export interface FitStatistics {
  /** Number of residuals fitted (rows × quantities). */
  points: number;
  /** RMS of n_measured − n_model over the fitted rows. */
  rms_n: number;
  rms_k: number;
  /** χ²/(points − free parameters), only when the table gives sigmas for every fitted quantity. */
  reduced_chi2: number | null;
  /** Survival probability of χ² under the χ² distribution with points − free degrees of freedom (sigma columns only). */
  chi2_p?: number | null;
  /** points − free parameters (those held at a bound do not count as free). */
  dof?: number;
  aic: number;
  bic: number;
  iterations: number;
}

export interface CorrelationReport {
  /** Threshold above which |r| is flagged. */
  threshold: number;
  /** Free parameters in matrix order. */
  parameters: string[];
  matrix: number[][];
  /** Pairs with |r| above the threshold. */
  high: { a: string; b: string; r: number }[];
}

export interface FitReport {
  model: string;
  parameters: Record<string, ParameterReport>;
  statistics: FitStatistics;
  correlations: CorrelationReport;
  warnings: string[];
  /** The warnings as data (rule, parameters, value, the option a next step involves). */
  diagnostics?: FitDiagnostic[];
  kk_consistent: boolean;
  /** Wavelength range of the fitted rows, nm: the model's validity range. */
  range_nm: [number, number];
  /** What rebuilds the model and says how it was fitted. */
  options: { terms: number; urbach: boolean; target: FitTarget; weighted: boolean; fixed: string[]; weights?: 'sigma' | 'relative' | 'estimated' };
  /** Multi-start summary (present when more than one start was run). */
  multistart?: { starts: number; reached_best: number; tolerance: string; skipped?: number };
}
