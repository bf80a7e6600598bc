/**
 * `nkledger ellipsometry fit` and `POST /api/v1/ellipsometry/fit`: measured Ψ/Δ (io/parse-psi-delta.ts) and a
 * sample description (a stack design whose layers list their free parameters) → fitted thicknesses and
 * dispersion parameters ± 1σ. resolveSample does the I/O (registry refs, files); fitEllipsometry is the ONE
 * function that does the CPU work (n,k of the materials, the transfer-matrix engine, the least squares of
 * src/fit/ellipsometry.ts); its input and output are plain data, so it runs on the server's compute threads.
 */
import { createHash } from 'node:crypto';
import { InputError, optionRef } from '../errors.ts';
import { fitPsiDelta, screenStarts, type PsiDeltaParameter, type PsiDeltaWarning } from '../fit/ellipsometry.ts';
import { parsePsiDelta, type PsiDeltaData, type PsiDeltaImport, type PsiDeltaOptions } from '../io/parse-psi-delta.ts';
import type { Registry } from '../registry/open.ts';
import { buildModel } from '../models/catalogue.ts';
import { type PreparedLayer, prepareLayer, type PsiDeltaSetup, psiDeltaInto, psiDeltaSetup, type StackMedium } from '../stack/transfer-matrix.ts';
import { locateField, parseStackDesign, type StackDesign } from './stack-design.ts';
import { type ImportedVersion, importVersion } from './versions.ts';
import { materialNk, type ResolveContext, type ResolvedDesign, type ResolvedMaterial, resolveStackDesign } from './stack.ts';

/** 1σ of Ψ and Δ when the file gives none (degrees): documented in docs/ellipsometry.md. */
export const DEFAULT_SIGMA_PSI_DEG = 0.05;
export const DEFAULT_SIGMA_DELTA_DEG = 0.1;
/** Default number of thickness starts across one interference period. */
export const DEFAULT_STARTS = 5;
export const MAX_STARTS = 50;
/** Default bounds of a fitted thickness, nm. */
const THICKNESS_BOUNDS: [number, number] = [0, 20_000];
/** Below this thickness a film's thickness and index are strongly correlated (common practice). */
const THIN_FILM_NM = 10;

export interface SampleParameter {
  /** Key in the report: "thickness_nm", "A", … or "layer2.thickness_nm" when several layers have free parameters. */
  name: string;
  /** 0-based layer index. */
  layer: number;
  /** "thickness_nm", "fraction" or a model parameter of the layer's source. */
  param: string;
  unit: string;
  start: number;
  bounds: [number, number];
  scale: number;
}

export interface ResolvedSample {
  design: ResolvedDesign;
  parameters: SampleParameter[];
}

/** Resolve a sample description: its materials (registry, files) and its free parameters, checked against the layers. */
export async function resolveSample(design: StackDesign, ctx: ResolveContext): Promise<ResolvedSample> {
  const resolved = await resolveStackDesign(design, ctx);
  const at = (path: Array<string | number>) => ({ file: ctx.designFile, ...locateField(ctx.designText, path), field: path.join('.') });
  const withFit = resolved.layers.map((l, i) => i).filter((i) => (resolved.layers[i].fit ?? []).length > 0);
  const parameters: SampleParameter[] = [];
  for (const i of withFit) {
    const layer = resolved.layers[i];
    const prefix = withFit.length > 1 ? `${layer.name ? layer.name.replace(/\s+/g, '_') : `layer${i + 1}`}.` : '';
    const material = layer.material;
    const model = material.model ? buildModel(material.model.spec, { terms: material.model.terms, urbach: material.model.urbach }) : null;
    const fit = layer.fit!;
    fit.forEach((param, j) => {
      const path = ['layers', i, 'fit', j];
      if (fit.indexOf(param) !== j) throw new InputError('sample-fit-parameter', `layer ${i + 1}: "${param}" is listed twice`, at(path));
      let spec: Omit<SampleParameter, 'name' | 'layer' | 'param' | 'bounds'> & { bounds: [number, number] };
      if (param === 'thickness_nm') {
        spec = { unit: 'nm', start: layer.thickness_nm, bounds: THICKNESS_BOUNDS, scale: 1 };
      } else if (param === 'fraction') {
        if (!material.mix) {
          throw new InputError('sample-fit-parameter', `layer ${i + 1}: "fraction" is free only for a mixture ({"mix": …})`, at(path));
        }
        spec = { unit: '1', start: material.mix.fraction, bounds: [0, 1], scale: 0.1 };
      } else {
        const p = model?.parameters.find((q) => q.name === param);
        if (!model || !p || material.fromLayer !== undefined) {
          const known = [
            'thickness_nm',
            ...(material.mix ? ['fraction'] : []),
            ...(model && material.fromLayer === undefined ? model.parameters.map((q) => q.name) : []),
          ];
          throw new InputError(
            'sample-fit-parameter',
            `layer ${i + 1}: "${param}" is not a parameter of this layer; it can fit ${known.join(', ')}${model ? '' : ' (model parameters are free only for a {"model": …} source)'}`,
            at(path),
          );
        }
        const start = material.model!.parameters[param];
        spec = { unit: p.unit, start, bounds: p.bounds, scale: Math.max(Math.abs(start), 1e-3) };
      }
      const given = layer.bounds?.[param];
      const bounds: [number, number] = given ?? spec.bounds;
      if (given && !(given[0] < given[1])) {
        throw new InputError('sample-bounds', `layer ${i + 1}: bounds of ${param} need low < high`, at(['layers', i, 'bounds', param]));
      }
      if (!(spec.start >= bounds[0] && spec.start <= bounds[1])) {
        throw new InputError(
          'sample-bounds',
          `layer ${i + 1}: the start value ${param} = ${spec.start} is outside its bounds [${bounds[0]}, ${bounds[1]}]`,
          at(given ? ['layers', i, 'bounds', param] : path),
        );
      }
      parameters.push({ name: `${prefix}${param}`, layer: i, param, ...spec, bounds });
    });
    for (const key of Object.keys(layer.bounds ?? {})) {
      if (!fit.includes(key)) {
        throw new InputError(
          'sample-bounds',
          `layer ${i + 1}: bounds given for ${key}, which is not in its "fit" list`,
          at(['layers', i, 'bounds', key]),
        );
      }
    }
  }
  resolved.layers.forEach((l, i) => {
    if (l.bounds && !(l.fit ?? []).length) {
      throw new InputError('sample-bounds', `layer ${i + 1}: bounds without a "fit" list`, at(['layers', i, 'bounds']));
    }
  });
  if (!parameters.length) {
    throw new InputError(
      'sample-nothing-to-fit',
      'the sample description frees no parameter: list them per layer, e.g. "fit": ["thickness_nm", "A", "E0"]',
      at(['layers']),
    );
  }
  return { design: resolved, parameters };
}

export interface EllipsometryOptions {
  /** Thickness starts across one interference period (1: the description's value only). */
  starts: number;
  extrapolate: boolean;
}

export interface EllipsometryCurve {
  angle_deg: number;
  wavelength_nm: number[];
  psi_deg: number[];
  delta_deg: number[];
  model_psi_deg: number[];
  model_delta_deg: number[];
}

export interface EllipsometryReport {
  parameters: Record<string, { value: number; stderr: number | null; unit: string; at_bound: boolean }>;
  statistics: {
    points: number;
    rms_psi_deg: number;
    rms_delta_deg: number;
    reduced_chi2: number;
    chi2: number;
    dof: number;
    iterations: number;
    converged: boolean;
  };
  correlations: { parameters: string[]; matrix: number[][]; threshold: number; high: Array<{ a: string; b: string; r: number }> };
  warnings: PsiDeltaWarning[];
  materials: Array<{ role: string; ref: string | null; sha256: string | null; describe: string }>;
  weights: { sigma_psi_deg: number | 'file'; sigma_delta_deg: number | 'file' };
  /** Thickness starts screened with the other parameters at their starting values, and the one the full fit started from. */
  multistart: {
    parameter: string | null;
    period_nm: number | null;
    screened: Array<{ start: number; value: number | null; chi2: number | null }>;
    best_start: number | null;
  };
  curves: EllipsometryCurve[];
}

/**
 * Material objects of earlier evaluations, reused while their parameters are unchanged, so the n, k cache (keyed
 * by object) holds across evaluations: a thickness step recomputes only the stack, not the materials.
 */
interface DesignMemo {
  layers: Map<number, { key: string; material: ResolvedMaterial }>;
  followed: WeakMap<ResolvedMaterial, { from: ResolvedMaterial[]; material: ResolvedMaterial }>;
}

const newMemo = (): DesignMemo => ({ layers: new Map(), followed: new WeakMap() });

/** The design with the parameter vector q applied: changed layers get new material objects, the rest keep theirs. */
function designAt(sample: ResolvedSample, q: ArrayLike<number>, memo: DesignMemo = newMemo()): ResolvedDesign {
  const base = sample.design;
  const layers = base.layers.map((l) => ({ ...l }));
  const values = new Map<number, Array<[string, number]>>();
  sample.parameters.forEach((p, j) => {
    if (p.param === 'thickness_nm') layers[p.layer].thickness_nm = q[j];
    else values.set(p.layer, [...(values.get(p.layer) ?? []), [p.param, q[j]]]);
  });
  const changed = new Map<number, ResolvedMaterial>();
  for (const [index, list] of values) {
    const key = JSON.stringify(list);
    let entry = memo.layers.get(index);
    if (entry?.key !== key) {
      const m = { ...base.layers[index].material };
      for (const [param, value] of list) {
        if (param === 'fraction') m.mix = { ...m.mix!, fraction: value };
        else m.model = { ...m.model!, parameters: { ...m.model!.parameters, [param]: value } };
      }
      entry = { key, material: m };
      memo.layers.set(index, entry);
    }
    changed.set(index, entry.material);
    layers[index].material = entry.material;
  }
  if (!changed.size) return { ...base, layers };
  // {"layer": N} sources follow their layer's new material (the same object while it is unchanged)
  const follow = (m: ResolvedMaterial): ResolvedMaterial => {
    if (m.fromLayer !== undefined && changed.has(m.fromLayer - 1)) {
      const from = changed.get(m.fromLayer - 1)!;
      const known = memo.followed.get(m);
      if (known && known.from[0] === from) return known.material;
      const material = { ...from, role: m.role, field: m.field, fromLayer: m.fromLayer, describe: m.describe };
      memo.followed.set(m, { from: [from], material });
      return material;
    }
    if (m.mix) {
      const parts = m.mix.materials.map(follow) as [ResolvedMaterial, ResolvedMaterial];
      if (parts[0] === m.mix.materials[0] && parts[1] === m.mix.materials[1]) return m;
      const known = memo.followed.get(m);
      if (known && known.from[0] === parts[0] && known.from[1] === parts[1]) return known.material;
      const material = { ...m, mix: { ...m.mix, materials: parts } };
      memo.followed.set(m, { from: parts, material });
      return material;
    }
    return m;
  };
  for (const l of layers) l.material = follow(l.material);
  return { ...base, layers, ambient: follow(base.ambient), substrate: { ...base.substrate, material: follow(base.substrate.material) } };
}

interface Groups {
  grid: number[];
  angles: Array<{ angle: number; points: number[]; wavelengthNm: number[]; gridIndex: number[] }>;
}

function groupsOf(data: PsiDeltaData): Groups {
  const grid = [...new Set(data.wavelengthNm)].sort((a, b) => a - b);
  const index = new Map(grid.map((w, i) => [w, i]));
  const byAngle = new Map<number, number[]>();
  data.angleDeg.forEach((a, i) => {
    byAngle.set(a, [...(byAngle.get(a) ?? []), i]);
  });
  return {
    grid,
    angles: [...byAngle].map(([angle, points]) => ({
      angle,
      points,
      wavelengthNm: points.map((i) => data.wavelengthNm[i]),
      gridIndex: points.map((i) => index.get(data.wavelengthNm[i])!),
    })),
  };
}

/** What the model evaluations share: the n, k of materials (by object) and the per-angle engine setups (by ambient and substrate). */
interface ModelCache {
  nk: WeakMap<ResolvedMaterial, StackMedium>;
  setups: WeakMap<StackMedium, WeakMap<StackMedium, PsiDeltaSetup[]>>;
  /** A layer medium prepared per angle (q, admittances), for the setups it was prepared on. */
  prepared: WeakMap<StackMedium, { setups: PsiDeltaSetup[]; layers: PreparedLayer[] | null }>;
  /** Let a {"layer": N} source take layer N's n, k (the same material by construction) instead of evaluating it again. */
  shareLayers: boolean;
}

const newCache = (shareLayers: boolean): ModelCache => ({ nk: new WeakMap(), setups: new WeakMap(), prepared: new WeakMap(), shareLayers });

/** Ψ, Δ of a design at every measured point; materials and setups unchanged since the last call come from `cache`. */
function modelPsiDelta(
  design: ResolvedDesign,
  groups: Groups,
  count: number,
  extrapolate: boolean,
  cache: ModelCache,
): { psiDeg: Float64Array; deltaDeg: Float64Array } {
  const nk = (m: ResolvedMaterial): StackMedium => {
    if (cache.shareLayers && m.fromLayer !== undefined && design.layers[m.fromLayer - 1]?.material.fromLayer === undefined) {
      return nk(design.layers[m.fromLayer - 1].material);
    }
    let v = cache.nk.get(m);
    if (!v) {
      v = materialNk(m, groups.grid, extrapolate, 'measured wavelengths', nk);
      cache.nk.set(m, v);
    }
    return v;
  };
  const ambient = nk(design.ambient);
  let byAmbient = cache.setups.get(ambient);
  if (!byAmbient) {
    if (Array.from(ambient.k).some((k) => k !== 0)) {
      throw new InputError('stack-ambient-absorbing', 'the ambient must be lossless (k = 0)', { field: design.ambient.field });
    }
    byAmbient = new WeakMap();
    cache.setups.set(ambient, byAmbient);
  }
  const media = design.layers.map((l) => nk(l.material));
  const substrate = nk(design.substrate.material);
  let setups = byAmbient.get(substrate);
  if (!setups) {
    setups = groups.angles.map((g) => psiDeltaSetup(g.wavelengthNm, g.gridIndex, ambient, substrate, g.angle));
    byAmbient.set(substrate, setups);
  }
  // A medium is prepared (q, admittances per angle) the second time it is used: most are used once (a trial point, a
  // dispersion column of the Jacobian), while a thickness step reuses its layers' media.
  const prepared = media.map((m) => {
    let p = cache.prepared.get(m);
    if (p?.setups !== setups) {
      p = { setups: setups!, layers: null };
      cache.prepared.set(m, p);
    } else if (!p.layers) p.layers = setups!.map((s) => prepareLayer(s, m));
    return p.layers;
  });
  const psiDeg = new Float64Array(count);
  const deltaDeg = new Float64Array(count);
  // Ψ, Δ describe the front surface alone (the engine leaves the back surface out of them)
  groups.angles.forEach((g, a) => {
    const layers = design.layers.map((l, j) => ({ prepared: prepared[j]?.[a], medium: media[j], thicknessNm: l.thickness_nm }));
    psiDeltaInto(setups[a], layers, psiDeg, deltaDeg, g.points);
  });
  return { psiDeg, deltaDeg };
}

/**
 * Thickness starts across one interference period of the film: Δd = λ / (2√(n² − n₀² sin²θ)) at the middle
 * wavelength and angle (the thickness change that adds 2π to the round-trip phase; Azzam & Bashara §4.3, from memory),
 * spread evenly around the description's value (which is always the first start), inside the bounds.
 */
function thicknessStarts(
  sample: ResolvedSample,
  groups: Groups,
  starts: number,
  extrapolate: boolean,
): { index: number; period: number | null; values: number[] } {
  const index = sample.parameters.findIndex((p) => p.param === 'thickness_nm' && !sample.design.layers[p.layer].material.mix);
  const first = index >= 0 ? index : sample.parameters.findIndex((p) => p.param === 'thickness_nm');
  if (first < 0) return { index: -1, period: null, values: [] };
  const p = sample.parameters[first];
  const wl = groups.grid[Math.floor(groups.grid.length / 2)];
  const angle = groups.angles[Math.floor(groups.angles.length / 2)].angle;
  const film = materialNk(sample.design.layers[p.layer].material, [wl], extrapolate, 'measured wavelengths');
  const n0 = materialNk(sample.design.ambient, [wl], extrapolate, 'measured wavelengths').n[0];
  const s = n0 * Math.sin((angle * Math.PI) / 180);
  const period = wl / (2 * Math.sqrt(Math.max(film.n[0] ** 2 - s * s, 1e-6)));
  const values: number[] = [p.start];
  for (let k = 1; values.length < starts && k <= starts; k++) {
    for (const sign of [1, -1]) {
      const v = p.start + (sign * k * period) / starts;
      if (values.length < starts && v >= p.bounds[0] && v <= p.bounds[1]) values.push(v);
    }
  }
  return { index: first, period, values };
}

/** Where a long fit is: called before each screened start, then every 20 model evaluations of the full fit. */
export type EllipsometryProgress = (step: { phase: 'screening' | 'fit'; done: number; total: number; evaluations: number }) => void;

/** The whole fit: the ONE CPU-heavy call behind the CLI and the API. `onProgress` (in-process callers only) hears where it is. */
export function fitEllipsometry(
  sample: ResolvedSample,
  data: PsiDeltaData,
  options: EllipsometryOptions,
  onProgress?: EllipsometryProgress,
): EllipsometryReport {
  const groups = groupsOf(data);
  const count = data.wavelengthNm.length;
  const cache = newCache(true);
  const memo = newMemo();
  const start = Float64Array.from(sample.parameters, (p) => p.start);
  // at the start values, refusals (a material not covering the data, an absorbing ambient) reach the user as they are,
  // each material evaluated as itself so that a refusal names the role it has in the description
  modelPsiDelta(designAt(sample, start), groups, count, options.extrapolate, newCache(false));
  let evaluations = 0;
  let phase: { phase: 'screening' | 'fit'; done: number; total: number } = { phase: 'screening', done: 0, total: 1 };
  const model = (q: Float64Array) => {
    if (onProgress && ++evaluations % 20 === 0) onProgress({ ...phase, evaluations });
    try {
      return modelPsiDelta(designAt(sample, q, memo), groups, count, options.extrapolate, cache);
    } catch (err) {
      if (err instanceof InputError && (err.rule === 'stack-nk-invalid' || err.rule === 'stack-out-of-range')) return null;
      throw err;
    }
  };
  const sigmaPsiDeg = data.sigmaPsiDeg?.map((s) => (Number.isFinite(s) ? s : DEFAULT_SIGMA_PSI_DEG)) ?? new Array(count).fill(DEFAULT_SIGMA_PSI_DEG);
  const sigmaDeltaDeg =
    data.sigmaDeltaDeg?.map((s) => (Number.isFinite(s) ? s : DEFAULT_SIGMA_DELTA_DEG)) ?? new Array(count).fill(DEFAULT_SIGMA_DELTA_DEG);
  const multi = thicknessStarts(sample, groups, Math.max(1, options.starts), options.extrapolate);
  const startVectors =
    multi.index < 0
      ? [start]
      : multi.values.map((v) => {
          const s = Float64Array.from(start);
          s[multi.index] = v;
          return s;
        });
  const params: PsiDeltaParameter[] = sample.parameters.map((p) => ({ name: p.name, unit: p.unit, bounds: p.bounds, scale: p.scale }));
  const thin = sample.parameters.find((p) => p.param === 'thickness_nm' && !sample.design.layers[p.layer].material.mix);
  const target = { psiDeg: data.psiDeg, deltaDeg: data.deltaDeg, sigmaPsiDeg, sigmaDeltaDeg };
  // Several thickness starts are screened by fitting the thickness alone (cheap); the full fit then runs from the
  // best of them. A full fit from every start would spend most of its time on starts a period away.
  const screened =
    startVectors.length > 1
      ? startVectors.flatMap((v, i) => {
          phase = { phase: 'screening', done: i, total: startVectors.length };
          onProgress?.({ ...phase, evaluations });
          return screenStarts(target, model, params, [v], multi.index);
        })
      : [];
  phase = { phase: 'fit', done: 0, total: 1 };
  onProgress?.({ ...phase, evaluations });
  let from = startVectors[0];
  const best = screened.reduce<number>((b, r, i) => (r && (b < 0 || r.chi2 < screened[b]!.chi2) ? i : b), -1);
  if (best >= 0) {
    from = Float64Array.from(startVectors[best]);
    from[multi.index] = screened[best]!.value;
  }
  const fit = fitPsiDelta(target, model, params, [from], {
    thinFilm: thin ? { parameter: thin.name, thresholdNm: THIN_FILM_NM } : undefined,
  });
  if (best >= 0) {
    const value = fit.values[multi.index];
    const others = screened.filter((r) => r && Math.abs(r.value - screened[best]!.value) > 1 && r.chi2 < 1.5 * screened[best]!.chi2);
    if (others.length) {
      const alt = others.reduce((a, b) => (b!.chi2 < a!.chi2 ? b : a))!;
      fit.warnings.push({
        rule: 'ambiguous-thickness',
        message: `with the other parameters at their starting values, ${params[multi.index].name} = ${alt.value.toFixed(2)} nm fits nearly as well as ${value.toFixed(2)} nm (χ² ${((alt.chi2 / screened[best]!.chi2 - 1) * 100).toFixed(0)} % higher): check the result against another measurement`,
        parameter: params[multi.index].name,
        value: alt.value,
      });
    }
  }
  const parameters: EllipsometryReport['parameters'] = {};
  params.forEach((p, j) => {
    parameters[p.name] = { value: fit.values[j], stderr: fit.stderr[j], unit: p.unit, at_bound: fit.atBound[j] };
  });
  const all = [sample.design.ambient, ...sample.design.layers.map((l) => l.material), sample.design.substrate.material];
  const withParts = (m: ResolvedMaterial): ResolvedMaterial[] => (m.mix ? [m, ...m.mix.materials.flatMap(withParts)] : [m]);
  return {
    parameters,
    statistics: {
      points: fit.points,
      rms_psi_deg: fit.rmsPsiDeg,
      rms_delta_deg: fit.rmsDeltaDeg,
      reduced_chi2: fit.reducedChi2,
      chi2: fit.chi2,
      dof: fit.dof,
      iterations: fit.iterations,
      converged: fit.converged,
    },
    correlations: fit.correlation,
    warnings: fit.warnings,
    materials: all.flatMap(withParts).map((m) => ({ role: m.role, ref: m.ref, sha256: m.sha256, describe: m.describe })),
    weights: {
      sigma_psi_deg: data.sigmaPsiDeg ? 'file' : DEFAULT_SIGMA_PSI_DEG,
      sigma_delta_deg: data.sigmaDeltaDeg ? 'file' : DEFAULT_SIGMA_DELTA_DEG,
    },
    multistart: {
      parameter: multi.index >= 0 ? params[multi.index].name : null,
      period_nm: multi.period,
      screened: screened.map((r, i) => ({
        start: startVectors[i][multi.index],
        value: r?.value ?? null,
        chi2: r?.chi2 ?? null,
      })),
      best_start: best >= 0 ? startVectors[best][multi.index] : multi.index >= 0 ? startVectors[0][multi.index] : null,
    },
    curves: groups.angles.map((g) => ({
      angle_deg: g.angle,
      wavelength_nm: g.wavelengthNm,
      psi_deg: g.points.map((i) => data.psiDeg[i]),
      delta_deg: g.points.map((i) => data.deltaDeg[i]),
      model_psi_deg: g.points.map((i) => fit.modelPsiDeg[i]),
      model_delta_deg: g.points.map((i) => fit.modelDeltaDeg[i]),
    })),
  };
}

/** The fitted design (every free parameter at its fitted value), for storing the film and reporting. */
export function fittedDesign(sample: ResolvedSample, report: EllipsometryReport): ResolvedDesign {
  return designAt(
    sample,
    sample.parameters.map((p) => report.parameters[p.name].value),
  );
}

// ---------------------------------------------------------------------------------------------------------
// The whole request (both front doors): read the data and the sample, fit, and optionally store the film

export interface EllipsometryRequest {
  data: { bytes: Uint8Array; file: string; importOptions?: PsiDeltaOptions };
  /** The sample description: its text (refusals then carry line and column) or parsed JSON (the API). */
  sample: { text: string | null; value?: unknown; file: string };
  resolve: Omit<ResolveContext, 'designFile' | 'designText'>;
  options: EllipsometryOptions;
}

export interface PreparedEllipsometry {
  sample: ResolvedSample;
  /** The description as given (parsed), for provenance. */
  description: StackDesign;
  data: PsiDeltaImport;
  dataFile: string;
  dataSha256: string;
}

/** Parse the Ψ/Δ file and resolve the sample (registry reads, files): the I/O before the fit. */
export async function prepareEllipsometry(req: Omit<EllipsometryRequest, 'options'>): Promise<PreparedEllipsometry> {
  const data = parsePsiDelta(req.data.bytes, { ...req.data.importOptions, file: req.data.file });
  const description = parseStackDesign(req.sample.text ?? req.sample.value, req.sample.file);
  const sample = await resolveSample(description, { ...req.resolve, designFile: req.sample.file, designText: req.sample.text });
  return { sample, description, data, dataFile: req.data.file, dataSha256: createHash('sha256').update(req.data.bytes).digest('hex') };
}

/** How a front door runs the fit: here by default; the API passes its worker pool (with the request's abort signal). */
export type EllipsometryCompute = (
  sample: ResolvedSample,
  data: PsiDeltaImport['data'],
  options: EllipsometryOptions,
) => Promise<EllipsometryReport> | EllipsometryReport;

/**
 * An ellipsometry fit from request to answer, for every front door (`nkledger ellipsometry fit`, POST
 * /api/v1/ellipsometry/fit): read the Ψ/Δ data and the sample (registry reads), fit, and put the answer together.
 * The prepared inputs and the report come back too, for the plot and for storing the film.
 */
export async function runEllipsometryRequest(
  req: EllipsometryRequest,
  compute: EllipsometryCompute = (sample, data, options) => fitEllipsometry(sample, data, options),
): Promise<{ prepared: PreparedEllipsometry; report: EllipsometryReport; answer: EllipsometryAnswer }> {
  const prepared = await prepareEllipsometry(req);
  const report = await compute(prepared.sample, prepared.data.data, req.options);
  return { prepared, report, answer: answerOf(prepared, report) };
}

export interface EllipsometryAnswer extends EllipsometryReport {
  data: { file: string; sha256: string; angles_deg: number[]; points: number; wavelength_range_nm: [number, number]; layout: 'long' | 'wide' };
  import_warnings: string[];
  notices: string[];
}

/** The fit's answer with what was read: the JSON both front doors print. */
export function answerOf(prepared: PreparedEllipsometry, report: EllipsometryReport): EllipsometryAnswer {
  const wl = prepared.data.data.wavelengthNm;
  return {
    data: {
      file: prepared.dataFile,
      sha256: prepared.dataSha256,
      angles_deg: prepared.data.detected.anglesDeg,
      points: wl.length,
      wavelength_range_nm: [Math.min(...wl), Math.max(...wl)],
      layout: prepared.data.detected.layout,
    },
    ...report,
    import_warnings: [...prepared.data.warnings, ...prepared.sample.design.warnings],
    notices: prepared.sample.design.notices,
  };
}

/**
 * Keep the fitted film as a new draft version of `slug`: the film layer's fitted model as the content's fit
 * (with the fit's statistics and the provenance of the fit inside it, so they are hashed with it) and its n, k
 * evaluated on the measured wavelengths as the table — derived from the model, which the stored fit and the
 * notes say. The film is the first layer with a free model parameter (else the first with a free thickness).
 */
export async function storeFittedFilm(
  registry: Registry,
  input: { slug: string; prepared: PreparedEllipsometry; report: EllipsometryReport },
  actor: string,
): Promise<ImportedVersion> {
  const { prepared, report } = input;
  const { sample } = prepared;
  const filmIndex =
    sample.parameters.find((p) => p.param !== 'thickness_nm' && p.param !== 'fraction')?.layer ??
    sample.parameters.find((p) => p.param === 'thickness_nm')!.layer;
  const fitted = fittedDesign(sample, report);
  const film = fitted.layers[filmIndex].material;
  if (!film.model) {
    throw new InputError(
      'ellipsometry-store-film',
      `layer ${filmIndex + 1}'s material is not a {"model": …} source, so there is no fitted model to store; ${optionRef('store')} keeps a film whose model parameters were fitted`,
      { field: `layers.${filmIndex}.material` },
    );
  }
  const grid = [...new Set(prepared.data.data.wavelengthNm)].sort((a, b) => a - b);
  const model = buildModel(film.model.spec, { terms: film.model.terms, urbach: film.model.urbach });
  const nk = model.nk(grid, film.model.parameters);
  const name = (param: string) => sample.parameters.find((p) => p.layer === filmIndex && p.param === param)?.name;
  const parameters: Record<string, { value: number; stderr: number | null; unit: string; at_bound: boolean }> = {};
  for (const spec of model.parameters) {
    const key = name(spec.name);
    const r = key ? report.parameters[key] : undefined;
    parameters[spec.name] = r ?? { value: film.model.parameters[spec.name], stderr: null, unit: spec.unit, at_bound: false };
  }
  const thicknessKey = name('thickness_nm');
  const thickness = thicknessKey ? report.parameters[thicknessKey] : { value: fitted.layers[filmIndex].thickness_nm, stderr: null };
  const pins = report.materials.filter((m) => m.ref !== null).map((m) => ({ role: m.role, ref: m.ref, sha256: m.sha256 }));
  const ellipsometry = {
    data: { file: prepared.dataFile.split(/[\\/]/).pop()!, sha256: prepared.dataSha256, angles_deg: prepared.data.detected.anglesDeg },
    sample: prepared.description,
    materials: pins,
    layer: filmIndex + 1,
    thickness_nm: { value: thickness.value, stderr: thickness.stderr },
    statistics: report.statistics,
    fitted: Object.fromEntries(Object.entries(report.parameters).map(([k, v]) => [k, { value: v.value, stderr: v.stderr }])),
  };
  const fit = {
    model: model.spec,
    parameters,
    range_nm: [grid[0], grid[grid.length - 1]] as [number, number],
    options: {
      terms: film.model.terms,
      urbach: film.model.urbach,
      target: 'psi-delta',
      weighted: true,
      fixed: model.parameters.filter((p) => !name(p.name)).map((p) => p.name),
    },
    statistics: report.statistics,
    correlations: report.correlations,
    warnings: report.warnings.map((w) => w.message),
    // as data too, so the review summary (service/review.ts) reads convergence and the rules
    diagnostics: report.warnings.map((w) => ({
      rule: w.rule,
      message: w.message,
      ...((w.parameters ?? w.parameter) && { parameters: w.parameters ?? [w.parameter!] }),
      ...(w.value !== undefined && { value: w.value }),
    })),
    kk_consistent: model.kkConsistent,
    table: 'derived: n, k evaluated from this fitted model on the measured wavelengths, not measured',
    ellipsometry,
  };
  const sigma = thickness.stderr === null ? '' : ` ± ${thickness.stderr.toPrecision(2)}`;
  const notes =
    `Fitted to ellipsometric Ψ/Δ (${ellipsometry.data.file}, sha256 ${prepared.dataSha256}) at ${ellipsometry.data.angles_deg.join(', ')}°; ` +
    `layer ${filmIndex + 1} thickness ${thickness.value.toFixed(3)}${sigma} nm; reduced χ² ${report.statistics.reduced_chi2.toPrecision(3)}. ` +
    `The n,k table is derived from the fitted ${model.spec} model on the measured wavelengths (not measured). ` +
    `Pinned materials: ${pins.map((p) => `${p.role} ${p.ref}${p.sha256 ? ` sha256 ${p.sha256}` : ''}`).join('; ') || 'none'}. ` +
    `Sample description: ${JSON.stringify(prepared.description)}`;
  return importVersion(
    registry,
    {
      slug: input.slug,
      table: { wavelengthNm: grid, n: nk.n, k: nk.k },
      fit,
      provenance: {
        method: 'spectroscopic-ellipsometry',
        angles_deg: ellipsometry.data.angles_deg,
        source_file: ellipsometry.data.file,
        source_sha256: prepared.dataSha256,
        substrate: fitted.substrate.material.ref ?? fitted.substrate.material.describe,
        notes,
        ...(prepared.data.detected.preamble.length && { preamble: prepared.data.detected.preamble }),
      },
    },
    actor,
  );
}
