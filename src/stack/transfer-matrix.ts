/**
 * Reflectance, transmittance and ellipsometric Ψ, Δ of a thin-film stack by the characteristic-matrix
 * (transfer-matrix) method: M. Born and E. Wolf, Principles of Optics, §1.6; H. A. Macleod, Thin-Film
 * Optical Filters, ch. 2 (published forms). Pure: arrays in, arrays out.
 *
 * Sign convention, stated once for the whole project: the registry keeps k ≥ 0, and the engine forms the
 * complex index N = n − ik (time dependence e^{+iωt}, the convention of Azzam & Bashara, Ellipsometry and
 * Polarized Light, 1977, and of Macleod), so k ≥ 0 means absorption and fields decay as e^{−2πk·z/λ} into
 * an absorbing medium. In that convention Ψ and Δ come straight out as ellipsometers report them:
 * ρ = rp/rs = tan Ψ·e^{iΔ} with rp = (N₁cosθ₀ − N₀cosθ₁)/(N₁cosθ₀ + N₀cosθ₁) and
 * rs = (N₀cosθ₀ − N₁cosθ₁)/(N₀cosθ₀ + N₁cosθ₁), Δ in [0°, 360°).
 *
 * Per medium j, with the invariant a = n₀ sin θ₀ (the ambient must be lossless): q_j = N_j cos θ_j =
 * √(N_j² − a²) on the physical branch, Im q ≤ 0 (a decaying wave for e^{+iωt}) and Re q > 0 when Im q = 0.
 * Tilted admittances (Macleod ch. 2, in units of the free-space admittance): η_s = q, η_p = N²/q. Layer phase
 * δ = 2π q d/λ; characteristic matrix [[cos δ, i sin δ/η], [iη sin δ, cos δ]];
 * [B; C] = M₁…M_L [1; η_sub]; r = (η₀B − C)/(η₀B + C); T = 4η₀ Re(η_sub)/|η₀B + C|²; A = 1 − R − T.
 * Macleod's r_p has the opposite sign of Azzam & Bashara's rp (his equals r_s at normal incidence), so
 * rp = −r_p(Macleod) below.
 *
 * A thick substrate with its back surface is summed incoherently (intensities of the multiply reflected
 * beams; C. C. Katsidis and D. I. Siapkas, Appl. Opt. 41, 3978 (2002)):
 * R = R_f + T_f T_f' R_b τ² / (1 − R_f' R_b τ²), T = T_f T_b τ / (1 − R_f' R_b τ²), with R_f, T_f the
 * coated front seen from the ambient, R_f', T_f' the same seen from inside the substrate, R_b, T_b the bare
 * back surface into the ambient again, and τ = e^{−4π|Im q_s| d/λ} the single-pass internal transmittance.
 * Ψ and Δ always describe the coated front surface alone (no back-surface light).
 */

export interface StackMedium {
  /** Refractive index n on the wavelength grid. */
  n: ArrayLike<number>;
  /** Extinction coefficient k ≥ 0 on the wavelength grid (N = n − ik). */
  k: ArrayLike<number>;
}

export interface StackLayer extends StackMedium {
  thicknessNm: number;
}

export interface StackProblem {
  wavelengthNm: ArrayLike<number>;
  /** Incidence (and exit) medium; it must be lossless (k = 0). */
  ambient: StackMedium;
  /** Layers in the order light meets them, from the ambient side. */
  layers: StackLayer[];
  substrate: StackMedium;
  /** A thick substrate summed incoherently with its back surface (exit into the ambient); absent: semi-infinite. */
  incoherentSubstrateMm?: number;
}

export interface StackSpectra {
  Rs: Float64Array;
  Rp: Float64Array;
  Ts: Float64Array;
  Tp: Float64Array;
  /** Coherent amplitude reflection coefficients of the front surface, Azzam & Bashara convention. */
  rsRe: Float64Array;
  rsIm: Float64Array;
  rpRe: Float64Array;
  rpIm: Float64Array;
  psiDeg: Float64Array;
  /** Δ in [0, 360). */
  deltaDeg: Float64Array;
}

const DEG = Math.PI / 180;
/** Largest |Im δ| used in cosh/sinh: e^{300} times the rescale bound 1e150 stays below overflow (1e308). */
const MAX_DECAY = 300;
const BIG = 1e150;

/**
 * Solve the stack at one angle of incidence (degrees in the ambient, 0 ≤ θ < 90) on the problem's grid.
 * Throws RangeError for caller bugs (absorbing ambient, mismatched arrays, bad angle).
 */
export function solveStack(problem: StackProblem, angleDeg: number): StackSpectra {
  const { wavelengthNm: wl, ambient, layers, substrate } = problem;
  const count = wl.length;
  if (!(angleDeg >= 0 && angleDeg < 90)) throw new RangeError(`angle of incidence must be in [0, 90) degrees, got ${angleDeg}`);
  for (const m of [ambient, substrate, ...layers]) {
    if (m.n.length !== count || m.k.length !== count) throw new RangeError('every medium needs n and k on the whole wavelength grid');
  }
  const L = layers.length;
  const sinT = Math.sin(angleDeg * DEG);
  const cosT = Math.cos(angleDeg * DEG);
  const dSub = problem.incoherentSubstrateMm === undefined ? -1 : problem.incoherentSubstrateMm * 1e6;
  const out: StackSpectra = {
    Rs: new Float64Array(count),
    Rp: new Float64Array(count),
    Ts: new Float64Array(count),
    Tp: new Float64Array(count),
    rsRe: new Float64Array(count),
    rsIm: new Float64Array(count),
    rpRe: new Float64Array(count),
    rpIm: new Float64Array(count),
    psiDeg: new Float64Array(count),
    deltaDeg: new Float64Array(count),
  };
  // Per-layer scratch for one wavelength: cos δ, sin δ, η_s, η_p (re, im), reused by the backward pass.
  const cRe = new Float64Array(L),
    cIm = new Float64Array(L),
    sRe = new Float64Array(L),
    sIm = new Float64Array(L);
  const esRe = new Float64Array(L),
    esIm = new Float64Array(L),
    epRe = new Float64Array(L),
    epIm = new Float64Array(L);
  // [B, C] as (re, im, re, im), and a square root, written in place: no allocation in the inner loops.
  const v = new Float64Array(4);
  const root = new Float64Array(2);

  for (let i = 0; i < count; i++) {
    const lambda = wl[i];
    const n0 = ambient.n[i];
    if (ambient.k[i] !== 0) throw new RangeError('the ambient medium must be lossless (k = 0)');
    const a = n0 * sinT;
    const a2 = a * a;
    // Ambient: q0 = n0 cos θ0 (real), η0s = q0, η0p = n0²/q0.
    const q0 = n0 * cosT;
    const e0s = q0;
    const e0p = (n0 * n0) / q0;

    for (let j = 0; j < L; j++) {
      const layer = layers[j];
      const n = layer.n[i],
        k = -layer.k[i]; // N = n − ik: imaginary part −k
      // N² = n² − k² + 2i·n·(−k)
      const n2Re = n * n - k * k,
        n2Im = 2 * n * k;
      physicalSqrtInto(n2Re - a2, n2Im, root);
      const qRe = root[0],
        qIm = root[1];
      // δ = 2π q d / λ
      const f = (2 * Math.PI * layer.thicknessNm) / lambda;
      const dRe = f * qRe,
        dIm = f * qIm;
      // An opaque layer (|Im δ| > 300: under e^{−600} ≈ 1e-261 in power) keeps its cos δ : sin δ ratio at the cap, so r is
      // right; T comes out at most 1e-261 (0 behind two such layers), instead of ∞/∞.
      let ch = 1,
        sh = 0; // a lossless, propagating layer: real δ, no exponential needed
      if (dIm !== 0) {
        const ex = Math.exp(Math.max(-MAX_DECAY, Math.min(MAX_DECAY, dIm))),
          exi = 1 / ex;
        ch = 0.5 * (ex + exi);
        sh = 0.5 * (ex - exi);
      }
      const cr = Math.cos(dRe),
        sr = Math.sin(dRe);
      // cos(x+iy) = cos x cosh y − i sin x sinh y; sin(x+iy) = sin x cosh y + i cos x sinh y
      cRe[j] = cr * ch;
      cIm[j] = -sr * sh;
      sRe[j] = sr * ch;
      sIm[j] = cr * sh;
      esRe[j] = qRe;
      esIm[j] = qIm;
      // η_p = N²/q
      const qq = qRe * qRe + qIm * qIm;
      epRe[j] = (n2Re * qRe + n2Im * qIm) / qq;
      epIm[j] = (n2Im * qRe - n2Re * qIm) / qq;
    }

    // Substrate admittances.
    const ns = substrate.n[i],
      ks = -substrate.k[i];
    const ns2Re = ns * ns - ks * ks,
      ns2Im = 2 * ns * ks;
    physicalSqrtInto(ns2Re - a2, ns2Im, root);
    const qsRe = root[0],
      qsIm = root[1];
    const qsq = qsRe * qsRe + qsIm * qsIm;
    const espRe = (ns2Re * qsRe + ns2Im * qsIm) / qsq;
    const espIm = (ns2Im * qsRe - ns2Re * qsIm) / qsq;

    for (let pol = 0; pol < 2; pol++) {
      const eta0 = pol === 0 ? e0s : e0p;
      const etaSubRe = pol === 0 ? qsRe : espRe;
      const etaSubIm = pol === 0 ? qsIm : espIm;
      const eRe = pol === 0 ? esRe : epRe;
      const eIm = pol === 0 ? esIm : epIm;

      // Forward: [B; C] = M1…ML [1; η_sub], applied from the substrate side.
      v[0] = 1;
      v[1] = 0;
      v[2] = etaSubRe;
      v[3] = etaSubIm;
      let shrink = 1; // how much [B; C] was scaled down on the way (several opaque layers)
      for (let j = L - 1; j >= 0; j--) {
        applyLayer(v, cRe[j], cIm[j], sRe[j], sIm[j], eRe[j], eIm[j]);
        shrink *= rescale(v);
      }
      const bRe = v[0],
        bIm = v[1],
        cr = v[2],
        ci = v[3];
      // r = (η0B − C)/(η0B + C), η0 real
      const numRe = eta0 * bRe - cr,
        numIm = eta0 * bIm - ci;
      const denRe = eta0 * bRe + cr,
        denIm = eta0 * bIm + ci;
      const den2 = denRe * denRe + denIm * denIm;
      const rRe = (numRe * denRe + numIm * denIm) / den2;
      const rIm = (numIm * denRe - numRe * denIm) / den2;
      const Rf = rRe * rRe + rIm * rIm;
      const Tf = ((4 * eta0 * etaSubRe) / den2) * shrink * shrink;
      let R = Rf,
        T = Tf;

      if (dSub >= 0) {
        // Backward through the coating, from inside the substrate out to the ambient: [B'; C'] = ML…M1 [1; η0].
        v[0] = 1;
        v[1] = 0;
        v[2] = eta0;
        v[3] = 0;
        let shrinkBack = 1;
        for (let j = 0; j < L; j++) {
          applyLayer(v, cRe[j], cIm[j], sRe[j], sIm[j], eRe[j], eIm[j]);
          shrinkBack *= rescale(v);
        }
        const b2Re = v[0],
          b2Im = v[1],
          c2r = v[2],
          c2i = v[3];
        // η_s B' (complex × complex)
        const hbRe = etaSubRe * b2Re - etaSubIm * b2Im,
          hbIm = etaSubRe * b2Im + etaSubIm * b2Re;
        const bnRe = hbRe - c2r,
          bnIm = hbIm - c2i;
        const bdRe = hbRe + c2r,
          bdIm = hbIm + c2i;
        const bd2 = bdRe * bdRe + bdIm * bdIm;
        const Rfb = (bnRe * bnRe + bnIm * bnIm) / bd2;
        const Tfb = ((4 * etaSubRe * eta0) / bd2) * shrinkBack * shrinkBack;
        // Bare back surface substrate → ambient.
        const snRe = etaSubRe - eta0,
          sdRe = etaSubRe + eta0;
        const sd2 = sdRe * sdRe + etaSubIm * etaSubIm;
        const Rb = (snRe * snRe + etaSubIm * etaSubIm) / sd2;
        const Tb = (4 * etaSubRe * eta0) / sd2;
        const tau = Math.exp((4 * Math.PI * qsIm * dSub) / lambda); // qsIm ≤ 0
        const denom = 1 - Rfb * Rb * tau * tau;
        R = Rf + (Tf * Tfb * Rb * tau * tau) / denom;
        T = (Tf * Tb * tau) / denom;
      }

      if (pol === 0) {
        out.Rs[i] = R;
        out.Ts[i] = T;
        out.rsRe[i] = rRe;
        out.rsIm[i] = rIm;
      } else {
        out.Rp[i] = R;
        out.Tp[i] = T;
        out.rpRe[i] = -rRe; // Azzam & Bashara's rp = −r_p(Macleod)
        out.rpIm[i] = -rIm;
      }
    }
    // ρ = rp/rs = tan Ψ e^{iΔ}
    const rsRe = out.rsRe[i],
      rsIm = out.rsIm[i],
      rpRe = out.rpRe[i],
      rpIm = out.rpIm[i];
    out.psiDeg[i] = Math.atan2(Math.hypot(rpRe, rpIm), Math.hypot(rsRe, rsIm)) / DEG;
    // arg(rp · conj(rs)) = arg(rp) − arg(rs)
    let delta = Math.atan2(rpIm * rsRe - rpRe * rsIm, rpRe * rsRe + rpIm * rsIm) / DEG;
    if (delta < 0) delta += 360;
    if (delta >= 360) delta -= 360;
    out.deltaDeg[i] = delta;
  }
  return out;
}

/**
 * √z on the physical branch for N = n − ik: Im ≤ 0 (decay for e^{+iωt}), and Re ≥ 0 when Im = 0
 * (a propagating wave travels away from the interface). Stable complex square root (Numerical Recipes §5.4).
 */
export function physicalSqrt(re: number, im: number): [number, number] {
  const out = new Float64Array(2);
  physicalSqrtInto(re, im, out);
  return [out[0], out[1]];
}

function physicalSqrtInto(re: number, im: number, out: Float64Array): void {
  const mod = Math.sqrt(re * re + im * im); // not Math.hypot: several times slower in V8, and no overflow at optical magnitudes
  let sr = 0,
    si = 0;
  if (mod !== 0) {
    if (re >= 0) {
      sr = Math.sqrt((mod + re) / 2);
      si = im / (2 * sr);
    } else {
      si = Math.sqrt((mod - re) / 2);
      if (im < 0) si = -si;
      sr = im / (2 * si);
    }
  }
  if (si > 0 || (si === 0 && sr < 0)) {
    sr = -sr;
    si = -si;
  }
  out[0] = sr + 0; // + 0 turns −0 into 0
  out[1] = si + 0;
}

/** Scale [B; C] down by 1e-150 when it grows past 1e150 (a stack of opaque layers); returns the factor applied. */
function rescale(v: Float64Array): number {
  if (Math.abs(v[0]) + Math.abs(v[1]) + Math.abs(v[2]) + Math.abs(v[3]) < BIG) return 1;
  for (let i = 0; i < 4; i++) v[i] /= BIG;
  return 1 / BIG;
}

/** [B; C] ← [[cos δ, i sin δ/η], [iη sin δ, cos δ]] [B; C] (complex), in place in v = (B re, B im, C re, C im). */
function applyLayer(v: Float64Array, cdRe: number, cdIm: number, sdRe: number, sdIm: number, eRe: number, eIm: number): void {
  const bRe = v[0],
    bIm = v[1],
    cRe = v[2],
    cIm = v[3];
  // i sin δ
  const isRe = -sdIm,
    isIm = sdRe;
  // (i sin δ)/η
  const e2 = eRe * eRe + eIm * eIm;
  const aRe = (isRe * eRe + isIm * eIm) / e2,
    aIm = (isIm * eRe - isRe * eIm) / e2;
  // iη sin δ
  const gRe = isRe * eRe - isIm * eIm,
    gIm = isRe * eIm + isIm * eRe;
  v[0] = cdRe * bRe - cdIm * bIm + aRe * cRe - aIm * cIm;
  v[1] = cdRe * bIm + cdIm * bRe + aRe * cIm + aIm * cRe;
  v[2] = gRe * bRe - gIm * bIm + cdRe * cRe - cdIm * cIm;
  v[3] = gRe * bIm + gIm * bRe + cdRe * cIm + cdIm * cRe;
}

/**
 * What a Ψ/Δ evaluation needs that does not depend on the layers: per measured point of one angle, the wavelength, the
 * invariant a² = (n₀ sin θ₀)², the ambient's admittances η₀s = n₀cosθ₀, η₀p = n₀/cosθ₀ and the substrate's η_s = q_s,
 * η_p = N_s²/q_s (the same formulas as solveStack). Built once per angle and reused by every fit evaluation.
 */
export interface PsiDeltaSetup {
  count: number;
  wavelengthNm: Float64Array;
  /** Index into the layers' n, k grid per point (the media are given on a wavelength grid shared by the angles). */
  gridIndex: Int32Array;
  a2: Float64Array;
  eta0s: Float64Array;
  eta0p: Float64Array;
  subSRe: Float64Array;
  subSIm: Float64Array;
  subPRe: Float64Array;
  subPIm: Float64Array;
}

/**
 * The parameter-independent part of psiDeltaInto for one angle: `wavelengthNm` per point, `gridIndex` its index into
 * the grid on which ambient, substrate and (later) the layers give n, k. Throws RangeError as solveStack does.
 */
export function psiDeltaSetup(
  wavelengthNm: ArrayLike<number>,
  gridIndex: ArrayLike<number>,
  ambient: StackMedium,
  substrate: StackMedium,
  angleDeg: number,
): PsiDeltaSetup {
  if (!(angleDeg >= 0 && angleDeg < 90)) throw new RangeError(`angle of incidence must be in [0, 90) degrees, got ${angleDeg}`);
  const count = wavelengthNm.length;
  if (gridIndex.length !== count) throw new RangeError('one grid index per point');
  const sinT = Math.sin(angleDeg * DEG);
  const cosT = Math.cos(angleDeg * DEG);
  const s: PsiDeltaSetup = {
    count,
    wavelengthNm: Float64Array.from(wavelengthNm),
    gridIndex: Int32Array.from(gridIndex),
    a2: new Float64Array(count),
    eta0s: new Float64Array(count),
    eta0p: new Float64Array(count),
    subSRe: new Float64Array(count),
    subSIm: new Float64Array(count),
    subPRe: new Float64Array(count),
    subPIm: new Float64Array(count),
  };
  const root = new Float64Array(2);
  for (let i = 0; i < count; i++) {
    const g = s.gridIndex[i];
    if (!(g >= 0 && g < ambient.n.length && g < substrate.n.length)) throw new RangeError('grid index outside the media');
    if (ambient.k[g] !== 0) throw new RangeError('the ambient medium must be lossless (k = 0)');
    const n0 = ambient.n[g];
    const a = n0 * sinT;
    s.a2[i] = a * a;
    const q0 = n0 * cosT;
    s.eta0s[i] = q0;
    s.eta0p[i] = (n0 * n0) / q0;
    const ns = substrate.n[g],
      ks = -substrate.k[g];
    const n2Re = ns * ns - ks * ks,
      n2Im = 2 * ns * ks;
    physicalSqrtInto(n2Re - s.a2[i], n2Im, root);
    const qq = root[0] * root[0] + root[1] * root[1];
    s.subSRe[i] = root[0];
    s.subSIm[i] = root[1];
    s.subPRe[i] = (n2Re * root[0] + n2Im * root[1]) / qq;
    s.subPIm[i] = (n2Im * root[0] - n2Re * root[1]) / qq;
  }
  return s;
}

/**
 * What does not depend on a layer's thickness, per point of a prepared angle: q = N cos θ = √(N² − a²) on the physical
 * branch, the admittances η_s = q and η_p = N²/q and their inverses (as in solveStack). Built once per material and
 * angle, so a thickness step of the fit costs only the phases and the matrix products.
 */
export type PreparedLayer = Float64Array;

/** Entries per point in a PreparedLayer: q, 1/q, η_p, 1/η_p as (re, im) pairs, interleaved (one allocation per layer). */
const PREPARED = 8;

/** A layer's n, k (on the setup's grid) prepared for psiDeltaInto at the setup's angle. */
export function prepareLayer(setup: PsiDeltaSetup, medium: StackMedium): PreparedLayer {
  const { count, gridIndex, a2 } = setup;
  const p = new Float64Array(PREPARED * count);
  const root = new Float64Array(2);
  for (let i = 0; i < count; i++) {
    const g = gridIndex[i];
    if (!(g < medium.n.length && g < medium.k.length)) throw new RangeError('every medium needs n and k on the whole wavelength grid');
    layerPoint(medium.n[g], medium.k[g], a2[i], p, PREPARED * i, root);
  }
  return p;
}

/** One point of a PreparedLayer, written into `out` at `o`: q, 1/q, η_p = N²/q, 1/η_p = q/N² for N = n − ik. */
function layerPoint(n: number, kPositive: number, a2: number, out: Float64Array, o: number, root: Float64Array): void {
  const k = -kPositive; // N = n − ik
  const n2Re = n * n - k * k,
    n2Im = 2 * n * k;
  physicalSqrtInto(n2Re - a2, n2Im, root);
  const qRe = root[0],
    qIm = root[1];
  const qq = qRe * qRe + qIm * qIm;
  const n2n2 = n2Re * n2Re + n2Im * n2Im;
  out[o] = qRe;
  out[o + 1] = qIm;
  out[o + 2] = qRe / qq;
  out[o + 3] = -qIm / qq;
  out[o + 4] = (n2Re * qRe + n2Im * qIm) / qq;
  out[o + 5] = (n2Im * qRe - n2Re * qIm) / qq;
  out[o + 6] = (qRe * n2Re + qIm * n2Im) / n2n2;
  out[o + 7] = (qIm * n2Re - qRe * n2Im) / n2n2;
}

/**
 * Ψ and Δ only (degrees, Δ in [0, 360)) of prepared layers (from the ambient side) on a prepared angle: the coherent
 * front-surface part of solveStack, with the same formulas and conventions (Azzam & Bashara's rp = −r_p of Macleod),
 * on plain numbers: both polarisations go through each layer's characteristic matrix together and nothing is
 * allocated per point. A layer without `prepared` is prepared point by point on the way (a medium used once need not
 * be kept). Point i is written at out index `at[i]` (i when absent).
 */
export function psiDeltaInto(
  setup: PsiDeltaSetup,
  layers: Array<{ prepared?: PreparedLayer; medium: StackMedium; thicknessNm: number }>,
  psiDeg: Float64Array,
  deltaDeg: Float64Array,
  at?: ArrayLike<number>,
): void {
  const { count, wavelengthNm: wl, gridIndex, a2, eta0s, eta0p, subSRe, subSIm, subPRe, subPIm } = setup;
  const L = layers.length;
  for (const l of layers) {
    if (!l.prepared && (l.medium.n.length <= maxOf(gridIndex) || l.medium.k.length <= maxOf(gridIndex))) {
      throw new RangeError('every medium needs n and k on the whole wavelength grid');
    }
  }
  const scratch = new Float64Array(PREPARED);
  const root = new Float64Array(2);
  for (let i = 0; i < count; i++) {
    // [B; C] per polarisation, from the substrate: [1; η_sub]
    let bsRe = 1,
      bsIm = 0,
      csRe = subSRe[i],
      csIm = subSIm[i];
    let bpRe = 1,
      bpIm = 0,
      cpRe = subPRe[i],
      cpIm = subPIm[i];
    const phase = (2 * Math.PI) / wl[i];
    for (let j = L - 1; j >= 0; j--) {
      const { prepared, medium, thicknessNm } = layers[j];
      let p: PreparedLayer = scratch,
        o = 0;
      if (prepared) {
        p = prepared;
        o = PREPARED * i;
      } else layerPoint(medium.n[gridIndex[i]], medium.k[gridIndex[i]], a2[i], scratch, 0, root);
      const qRe = p[o],
        qIm = p[o + 1];
      // δ = 2π q d / λ
      const f = phase * thicknessNm;
      const dRe = f * qRe,
        dIm = f * qIm;
      let ch = 1,
        sh = 0; // see solveStack: lossless layers need no exponential, opaque ones are capped
      if (dIm !== 0) {
        const ex = Math.exp(Math.max(-MAX_DECAY, Math.min(MAX_DECAY, dIm))),
          exi = 1 / ex;
        ch = 0.5 * (ex + exi);
        sh = 0.5 * (ex - exi);
      }
      const cr = Math.cos(dRe),
        sr = Math.sin(dRe);
      const cdRe = cr * ch,
        cdIm = -sr * sh;
      // i sin δ
      const isRe = -cr * sh,
        isIm = sr * ch;
      // characteristic matrix [[cos δ, i sin δ/η], [iη sin δ, cos δ]] per polarisation
      let e = p[o + 2],
        ei = p[o + 3];
      const asRe = isRe * e - isIm * ei,
        asIm = isRe * ei + isIm * e;
      const gsRe = isRe * qRe - isIm * qIm,
        gsIm = isRe * qIm + isIm * qRe;
      e = p[o + 6];
      ei = p[o + 7];
      const apRe = isRe * e - isIm * ei,
        apIm = isRe * ei + isIm * e;
      e = p[o + 4];
      ei = p[o + 5];
      const gpRe = isRe * e - isIm * ei,
        gpIm = isRe * ei + isIm * e;
      // The s and p products are written out on locals on purpose: the same through applyLayer-style helpers on small
      // scratch arrays measured about 20 % slower over the whole ellipsometry fit (scripts/bench-ellipsometry.ts).
      let t0 = cdRe * bsRe - cdIm * bsIm + asRe * csRe - asIm * csIm;
      let t1 = cdRe * bsIm + cdIm * bsRe + asRe * csIm + asIm * csRe;
      let t2 = gsRe * bsRe - gsIm * bsIm + cdRe * csRe - cdIm * csIm;
      let t3 = gsRe * bsIm + gsIm * bsRe + cdRe * csIm + cdIm * csRe;
      // rescale as solveStack does (several opaque layers); Ψ, Δ depend only on ratios
      if (Math.abs(t0) + Math.abs(t1) + Math.abs(t2) + Math.abs(t3) >= BIG) {
        t0 /= BIG;
        t1 /= BIG;
        t2 /= BIG;
        t3 /= BIG;
      }
      bsRe = t0;
      bsIm = t1;
      csRe = t2;
      csIm = t3;
      t0 = cdRe * bpRe - cdIm * bpIm + apRe * cpRe - apIm * cpIm;
      t1 = cdRe * bpIm + cdIm * bpRe + apRe * cpIm + apIm * cpRe;
      t2 = gpRe * bpRe - gpIm * bpIm + cdRe * cpRe - cdIm * cpIm;
      t3 = gpRe * bpIm + gpIm * bpRe + cdRe * cpIm + cdIm * cpRe;
      if (Math.abs(t0) + Math.abs(t1) + Math.abs(t2) + Math.abs(t3) >= BIG) {
        t0 /= BIG;
        t1 /= BIG;
        t2 /= BIG;
        t3 /= BIG;
      }
      bpRe = t0;
      bpIm = t1;
      cpRe = t2;
      cpIm = t3;
    }
    // r = (η0B − C)/(η0B + C), η0 real
    const es = eta0s[i],
      ep = eta0p[i];
    let numRe = es * bsRe - csRe,
      numIm = es * bsIm - csIm;
    let denRe = es * bsRe + csRe,
      denIm = es * bsIm + csIm;
    let den2 = denRe * denRe + denIm * denIm;
    const rsRe = (numRe * denRe + numIm * denIm) / den2,
      rsIm = (numIm * denRe - numRe * denIm) / den2;
    numRe = ep * bpRe - cpRe;
    numIm = ep * bpIm - cpIm;
    denRe = ep * bpRe + cpRe;
    denIm = ep * bpIm + cpIm;
    den2 = denRe * denRe + denIm * denIm;
    // Azzam & Bashara's rp = −r_p(Macleod)
    const rpRe = -(numRe * denRe + numIm * denIm) / den2,
      rpIm = -(numIm * denRe - numRe * denIm) / den2;
    const o = at ? at[i] : i;
    // ρ = rp/rs = tan Ψ e^{iΔ}; √ instead of Math.hypot (several times slower in V8; no overflow at optical magnitudes)
    psiDeg[o] = Math.atan2(Math.sqrt(rpRe * rpRe + rpIm * rpIm), Math.sqrt(rsRe * rsRe + rsIm * rsIm)) / DEG;
    let delta = Math.atan2(rpIm * rsRe - rpRe * rsIm, rpRe * rsRe + rpIm * rsIm) / DEG;
    if (delta < 0) delta += 360;
    if (delta >= 360) delta -= 360;
    deltaDeg[o] = delta;
  }
}

function maxOf(v: Int32Array): number {
  let m = -1;
  for (let i = 0; i < v.length; i++) if (v[i] > m) m = v[i];
  return m;
}
