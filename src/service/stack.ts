/**
 * `nkledger stack` and `POST /api/v1/stack`: a design's materials resolved to pinned versions, files or
 * constants (resolveStackDesign, which does the I/O), then computeStack — the ONE function that does the
 * CPU work (n,k on the grids, the transfer-matrix engine of src/stack, colour, the thickness sweep). Its
 * input and output are plain JSON-able data, so it can run in a worker thread as it is.
 */
import { createHash } from 'node:crypto';
import { dirname, resolve as resolvePath } from 'node:path';
import { InputError, NotFoundError, optionRef, type InputLocation } from '../errors.ts';
import { evaluateFitReport } from '../fit/evaluate.ts';
import type { FitReport } from '../fit/types.ts';
import { parseNkTable } from '../io/parse-table.ts';
import { parseOptionNumber } from '../io/numbers.ts';
import { parseWavelengthList } from '../io/wavelength-list.ts';
import { buildModel } from '../models/catalogue.ts';
import { nkFromEps } from '../optics/permittivity.ts';
import { evaluateTable } from '../optics/table-eval.ts';
import type { Registry } from '../registry/open.ts';
import { usableRangeNm } from '../registry/records.ts';
import { formatRef, parseRef } from '../registry/refs.ts';
import type { VersionContent, VersionStatus } from '../registry/types.ts';
import { bruggemanInto, mixPermittivity, type EmaRule } from '../stack/effective-medium.ts';
import { colourOf, COLOUR_GRID_NM, type CieTables, type Colour } from '../stack/colour.ts';
import { solveStack, type StackMedium, type StackSpectra } from '../stack/transfer-matrix.ts';
import type { NkTable } from '../table.ts';
import { cieTables } from './cie.ts';
import type { Lockfile } from './lock.ts';
import { readSource } from './source.ts';
import { locateField, parseStackDesign, type MaterialSource, type StackDesign } from './stack-design.ts';
import { loadVersion, withExistingRegistry, type LoadedSource } from './table-source.ts';

export const STACK_POLARIZATIONS = ['unpolarized', 's', 'p'] as const;
export type StackPolarization = (typeof STACK_POLARIZATIONS)[number];

/** Most thickness steps of one sweep, and most angles of one request. */
const MAX_SWEEP_STEPS = 10_000;
const MAX_ANGLES = 90;

export interface StackSweep {
  /** 1-based layer number, counted from the ambient side. */
  layer: number;
  startNm: number;
  stopNm: number;
  stepNm: number;
}

export interface StackOptions {
  wavelengthNm: number[];
  anglesDeg: number[];
  polarization: StackPolarization;
  /** Let model sources evaluate outside their validity range (tables never extrapolate). */
  extrapolate: boolean;
  sweep: StackSweep | null;
}

/** The option texts of both front doors (CLI flags, API query fields); `names` spell them in refusals. */
export interface StackOptionText {
  angle?: string;
  polarization?: string;
  sweep?: string;
  extrapolate?: boolean;
}

export function parseStackOptions(
  text: StackOptionText,
  wavelengthNm: number[],
  names: { angle: string; polarization: string; sweep: string } = {
    angle: optionRef('angle'),
    polarization: optionRef('polarization'),
    sweep: optionRef('sweep'),
  },
): StackOptions {
  const anglesDeg = (text.angle ?? '0')
    .split(',')
    .map((a) => parseOptionNumber(a.trim(), names.angle, { min: 0, max: 89.999999, hint: 'degrees of incidence in the ambient, 0 ≤ θ < 90' }));
  if (anglesDeg.length > MAX_ANGLES) throw new InputError('bad-option', `${names.angle}: at most ${MAX_ANGLES} angles`, { field: 'angle' });
  const polarization = (text.polarization ?? 'unpolarized') as StackPolarization;
  if (!STACK_POLARIZATIONS.includes(polarization)) {
    throw new InputError('bad-option', `${names.polarization}: "${text.polarization}" is not one of ${STACK_POLARIZATIONS.join(', ')}`, {
      field: 'polarization',
    });
  }
  if (wavelengthNm.some((w) => !(w > 0))) throw new InputError('bad-option', 'wavelengths must be positive (nm)', { field: 'at' });
  return {
    wavelengthNm,
    anglesDeg,
    polarization,
    extrapolate: text.extrapolate ?? false,
    sweep: text.sweep === undefined ? null : parseSweep(text.sweep, names.sweep),
  };
}

function parseSweep(text: string, name: string): StackSweep {
  const m = /^\s*(\d+)\s*=\s*([^:]+):([^:]+):([^:]+)\s*$/.exec(text);
  if (!m)
    throw new InputError('bad-option', `${name}: "${text}" is not LAYER=START:STOP:STEP (layer number from 1, thickness in nm), e.g. 1=0:600:5`, {
      field: 'sweep',
    });
  const layer = parseOptionNumber(m[1], `${name} layer`, { integer: true, min: 1 });
  const startNm = parseOptionNumber(m[2], `${name} start`, { min: 0 });
  const stopNm = parseOptionNumber(m[3], `${name} stop`, { min: startNm, hint: 'stop ≥ start' });
  const stepNm = parseOptionNumber(m[4], `${name} step`, { above: 0 });
  if (sweepThicknesses({ layer, startNm, stopNm, stepNm }).length > MAX_SWEEP_STEPS) {
    throw new InputError('bad-option', `${name}: more than ${MAX_SWEEP_STEPS} thickness steps`, { field: 'sweep' });
  }
  return { layer, startNm, stopNm, stepNm };
}

function sweepThicknesses(s: StackSweep): number[] {
  const count = Math.floor((s.stopNm - s.startNm) / s.stepNm + 1e-9) + 1;
  return Array.from({ length: count }, (_, i) => +(s.startNm + i * s.stepNm).toPrecision(12));
}

/** The work a request asks for: layers × wavelengths × angles × sweep steps (each at least 1); capped by the API. */
export function stackWork(design: StackDesign, options: StackOptions): number {
  const steps = options.sweep ? sweepThicknesses(options.sweep).length : 1;
  return Math.max(1, design.layers.length) * options.wavelengthNm.length * options.anglesDeg.length * steps;
}

// ---------------------------------------------------------------------------------------------------------
// Resolution: every source to data (the only I/O)

/** A material as computeStack needs it: plain data, plus what the output says about where it came from. */
export interface ResolvedMaterial {
  /** "ambient", "layer 2", "substrate". */
  role: string;
  /** Field of the design, e.g. layers.1.material. */
  field: string;
  source: 'registry' | 'file' | 'constant' | 'model' | 'mix';
  /** Registry pin slug@N, the file as written in the design, or null. */
  ref: string | null;
  /** Content hash of a registry version, SHA-256 of a file's bytes, or null. */
  sha256: string | null;
  status: VersionStatus | null;
  /** Short description: "fitted tauc-lorentz model", "measured table", "n = 1.38, k = 0", "sellmeier model". */
  describe: string;
  content?: VersionContent;
  table?: NkTable;
  constant?: { n: number; k: number };
  model?: { spec: string; terms: number; urbach: boolean; parameters: Record<string, number>; range_nm: [number, number] | null };
  /** A {"layer": N} source: the material of layer N (1-based), copied here; the fit substitutes it on every change. */
  fromLayer?: number;
  /** An effective-medium mixture: the second material at volume fraction `fraction` in the first. */
  mix?: { rule: EmaRule; fraction: number; materials: [ResolvedMaterial, ResolvedMaterial] };
}

export interface ResolvedDesign {
  name: string | null;
  notes: string | null;
  file: string | null;
  ambient: ResolvedMaterial;
  layers: Array<{
    name: string | null;
    thickness_nm: number;
    material: ResolvedMaterial;
    /** Ellipsometry fit: the layer's free parameters and their bounds, as the design lists them. */
    fit?: string[];
    bounds?: Record<string, [number, number]>;
  }>;
  substrate: { material: ResolvedMaterial; thickness_mm: number | null; incoherent: boolean };
  notices: string[];
  warnings: string[];
}

export interface ResolveContext {
  /** An open registry (the API); else `db` is opened if a ref needs it (never created). */
  registry?: Registry;
  db?: string;
  /** How to load a registry ref instead of a registry or `db`: the CLI's server mode fetches it from the server. */
  loadVersion?: (ref: string) => Promise<LoadedSource>;
  /** Name of the design file in messages, and the base of relative file sources. */
  designFile: string;
  /** The design text, for line and column in refusals (null when the design came as parsed JSON). */
  designText: string | null;
  /** False: file sources are refused (the HTTP API: the server's disk is not the client's). */
  allowFiles: boolean;
  lock?: { lockfile: Lockfile; file: string };
}

const AIR: MaterialSource = { n: 1, k: 0 };

interface Slot {
  role: string;
  path: Array<string | number>;
  source: MaterialSource;
  /** The two component slots of a mixture. */
  parts?: [Slot, Slot];
}

/** A slot and, for a mixture, its components' slots depth-first (nested mixtures allowed). */
function withParts(slot: Slot): Slot[] {
  const src = slot.source;
  if (!('mix' in src)) return [slot];
  const parts = src.materials.map(
    (source, i): Slot => ({ role: `${slot.role}, ${src.mix} part ${i + 1}`, path: [...slot.path, 'materials', i], source }),
  ) as [Slot, Slot];
  slot.parts = parts;
  return [slot, ...parts.flatMap(withParts)];
}

export async function resolveStackDesign(design: StackDesign, ctx: ResolveContext): Promise<ResolvedDesign> {
  const slots: Slot[] = [
    { role: 'ambient', path: ['ambient', 'material'], source: design.ambient?.material ?? AIR },
    ...design.layers.map((l, i) => ({ role: `layer ${i + 1}`, path: ['layers', i, 'material'], source: l.material })),
    { role: 'substrate', path: ['substrate', 'material'], source: design.substrate.material },
  ];
  const where = (path: Array<string | number>, extra: string[] = []) => ({
    file: ctx.designFile,
    ...locateField(ctx.designText, [...path, ...extra]),
    field: [...path, ...extra].join('.'),
  });
  const notices: string[] = [];
  const warnings: string[] = [];
  const resolved = new Map<Slot, ResolvedMaterial>();
  const every = slots.flatMap(withParts);
  checkLayerSources(design, every, where);

  for (const slot of every) {
    const base = { role: slot.role, field: slot.path.join('.') };
    const src = slot.source;
    if ('file' in src) {
      if (!ctx.allowFiles) {
        throw new InputError(
          'stack-file-source',
          `${slot.role}: {"file": …} sources are refused here (the server's disk is not the client's); use a registry ref, constant n, k or a model`,
          where(slot.path, ['file']),
        );
      }
      const baseDir = ctx.designFile === '<stdin>' || ctx.designFile === '-' ? process.cwd() : dirname(resolvePath(ctx.designFile));
      const path = resolvePath(baseDir, src.file);
      let bytes: Uint8Array;
      try {
        bytes = (await readSource(path, { file: src.file })).bytes;
      } catch (err) {
        if (err instanceof InputError) throw err.rephrase(`${slot.role}: ${err.message}`, where(slot.path, ['file']));
        throw err;
      }
      const imported = parseNkTable(bytes, { file: src.file });
      warnings.push(...imported.warnings.map((w) => `${slot.role} (${src.file}): ${w}`));
      resolved.set(slot, {
        ...base,
        source: 'file',
        ref: src.file,
        sha256: createHash('sha256').update(bytes).digest('hex'),
        status: null,
        describe: 'measured table',
        table: imported.table,
      });
    } else if ('n' in src) {
      const k = src.k ?? 0;
      resolved.set(slot, {
        ...base,
        source: 'constant',
        ref: null,
        sha256: null,
        status: null,
        describe: `n = ${src.n}, k = ${k}`,
        constant: { n: src.n, k },
      });
    } else if ('model' in src) {
      resolved.set(slot, {
        ...base,
        source: 'model',
        ref: null,
        sha256: null,
        status: null,
        describe: `${src.model} model`,
        model: resolveModelSource(src, slot.role, where(slot.path, ['parameters'])),
      });
    }
  }

  const refSlots = every.filter((s) => 'ref' in s.source);
  if (refSlots.length) {
    // Every ref is looked up first (through the lockfile when one is given), then each is checked in order.
    const plan = refSlots.map((slot) => {
      const at = where(slot.path, ['ref']);
      const text = (slot.source as { ref: string }).ref;
      return { slot, at, ...(ctx.lock ? throughLock(text, ctx.lock, slot.role, at) : { ref: text, lockedSha: null }) };
    });
    const inSlot = (slot: Slot, at: InputLocation, err: unknown) =>
      err instanceof InputError ? err.rephrase(`${slot.role}: ${err.message}`, at) : err;
    const loadedVersions: LoadedSource[] = [];
    const loadAll = async (registry: Registry) => {
      for (const { slot, at, ref } of plan) {
        try {
          loadedVersions.push(await loadVersion(registry, ref));
        } catch (err) {
          throw inSlot(slot, at, err);
        }
      }
    };
    if (ctx.loadVersion) {
      for (const { slot, at, ref } of plan) {
        try {
          loadedVersions.push(await ctx.loadVersion(ref));
        } catch (err) {
          throw inSlot(slot, at, err);
        }
      }
    } else if (ctx.registry) await loadAll(ctx.registry);
    else {
      const refs = refSlots.map((s) => (s.source as { ref: string }).ref).join(', ');
      try {
        await withExistingRegistry(refs, ctx.db, loadAll);
      } catch (err) {
        if (!(err instanceof NotFoundError && err.rule === 'source-not-found')) throw err;
        throw new NotFoundError(
          `the design names registry versions (${refs}) but there is no registry database to look them up in`,
          'registry-missing',
        );
      }
    }
    plan.forEach(({ slot, at, lockedSha }, i) => {
      const loaded = loadedVersions[i];
      const origin = loaded.detected as { ref: string; sha256: string; status: VersionStatus; model: string | null };
      if (lockedSha && origin.sha256 !== lockedSha) {
        throw new InputError(
          'stack-lock-mismatch',
          `${slot.role}: ${origin.ref} in the registry has sha256 ${origin.sha256.slice(0, 12)}…, the lockfile ${ctx.lock!.file} pins ${lockedSha.slice(0, 12)}… (the lockfile no longer matches the registry)`,
          at,
        );
      }
      notices.push(...loaded.notices.map((n) => `${slot.role}: ${n}`));
      warnings.push(...loaded.warnings.map((w) => `${slot.role}: ${w}`));
      const describe = loaded.content!.fit ? `fitted ${loaded.content!.fit.model} model` : 'measured table';
      resolved.set(slot, {
        role: slot.role,
        field: slot.path.join('.'),
        source: 'registry',
        ref: origin.ref,
        sha256: origin.sha256,
        status: origin.status,
        describe,
        content: loaded.content!,
      });
    });
  }

  const get = (slot: Slot): ResolvedMaterial => {
    const src = slot.source;
    if ('layer' in src) {
      const target = get(slots[src.layer]); // slots[0] is the ambient, so layer N is slots[N]
      return {
        ...target,
        role: slot.role,
        field: slot.path.join('.'),
        fromLayer: src.layer,
        describe: `layer ${src.layer}'s material (${target.ref ?? target.describe})`,
      };
    }
    if (!('mix' in src)) return resolved.get(slot)!;
    const parts = slot.parts!.map(get) as [ResolvedMaterial, ResolvedMaterial];
    const describe = `${src.mix} mixture: ${src.fraction} of ${parts[1].ref ?? parts[1].describe} in ${parts[0].ref ?? parts[0].describe}`;
    return {
      role: slot.role,
      field: slot.path.join('.'),
      source: 'mix',
      ref: null,
      sha256: null,
      status: null,
      describe,
      mix: { rule: src.mix, fraction: src.fraction, materials: parts },
    };
  };
  const sub = design.substrate;
  const incoherent = sub.incoherent ?? sub.thickness_mm !== undefined;
  if (!incoherent && sub.thickness_mm !== undefined)
    notices.push('substrate: incoherent is false, so it is semi-infinite and thickness_mm is not used (no back surface)');
  return {
    name: design.name ?? null,
    notes: design.notes ?? null,
    file: ctx.designFile,
    ambient: get(slots[0]),
    layers: design.layers.map((l, i) => ({
      name: l.name ?? null,
      thickness_nm: l.thickness_nm,
      material: get(slots[i + 1]),
      ...(l.fit && { fit: l.fit }),
      ...(l.bounds && { bounds: l.bounds as Record<string, [number, number]> }),
    })),
    substrate: { material: get(slots[slots.length - 1]), thickness_mm: sub.thickness_mm ?? null, incoherent },
    notices,
    warnings,
  };
}

/**
 * {"layer": N} sources: N names an existing layer other than the one the source sits in, and that layer's
 * material holds no {"layer"} source itself (no chains, so no cycles).
 */
function checkLayerSources(
  design: StackDesign,
  every: Slot[],
  where: (path: Array<string | number>, extra?: string[]) => { file: string; line?: number; column?: number; field: string },
): void {
  const holdsLayer = (src: MaterialSource): boolean => 'layer' in src || ('mix' in src && src.materials.some(holdsLayer));
  for (const slot of every) {
    const src = slot.source;
    if (!('layer' in src)) continue;
    const at = where(slot.path, ['layer']);
    const count = design.layers.length;
    if (src.layer > count) {
      throw new InputError(
        'design-layer-source',
        `${slot.role}: {"layer": ${src.layer}} names no layer (the design has ${count}, numbered from 1 on the ambient side)`,
        at,
      );
    }
    if (slot.path[0] === 'layers' && slot.path[1] === src.layer - 1) {
      throw new InputError('design-layer-source', `${slot.role}: {"layer": ${src.layer}} names the layer it sits in`, at);
    }
    if (holdsLayer(design.layers[src.layer - 1].material)) {
      throw new InputError(
        'design-layer-source',
        `${slot.role}: layer ${src.layer} is itself made from another layer's material; name that layer directly`,
        at,
      );
    }
  }
}

/** A design ref read through the lockfile: the locked version of its material, refused when the two disagree. */
function throughLock(
  text: string,
  lock: { lockfile: Lockfile; file: string },
  role: string,
  at: ReturnType<typeof locateField> & { file: string },
): { ref: string; lockedSha: string } {
  const parsed = parseRef(text);
  const entry = lock.lockfile.materials[parsed.slug];
  if (!entry) {
    throw new InputError('stack-lock-missing', `${role}: ${parsed.slug} is not in the lockfile ${lock.file}; pin it there first`, at);
  }
  const pinned = formatRef(parsed.slug, entry.version);
  const disagree =
    (parsed.kind === 'number' && parsed.version !== entry.version) || (parsed.kind === 'hash' && !entry.sha256.startsWith(parsed.hashPrefix));
  if (disagree) {
    throw new InputError(
      'stack-lock-disagrees',
      `${role}: the design names ${text}, the lockfile ${lock.file} pins ${pinned} (sha256 ${entry.sha256.slice(0, 12)}…)`,
      at,
    );
  }
  return { ref: pinned, lockedSha: entry.sha256 };
}

/** The model of a {"model", "parameters"} source, with terms and Urbach tail inferred from the parameter names when not given. */
function resolveModelSource(
  src: { model: string; parameters: Record<string, number>; terms?: number; urbach?: boolean; range_nm?: [number, number] },
  role: string,
  at: { file: string; line?: number; column?: number; field: string },
): NonNullable<ResolvedMaterial['model']> {
  const given = Object.keys(src.parameters);
  const termChoices = src.terms !== undefined ? [src.terms] : [1, 2, 3, 4, 5, 6, 7, 8];
  const urbachChoices = src.urbach !== undefined ? [src.urbach] : [false, true];
  let first: { names: string[]; error?: InputError } | null = null;
  for (const terms of termChoices) {
    for (const urbach of urbachChoices) {
      let model;
      try {
        model = buildModel(src.model, { terms, urbach });
      } catch (err) {
        if (!(err instanceof InputError)) throw err;
        if (err.rule === 'unknown-model' || err.rule === 'duplicate-model-term' || err.rule === 'model-not-summable')
          throw new InputError(err.rule, `${role}: ${err.message}`, at);
        first ??= { names: [], error: err };
        continue;
      }
      const names = model.parameters.map((p) => p.name);
      first = first?.names.length ? first : { names };
      const required = model.parameters.filter((p) => p.defaultValue === undefined).map((p) => p.name);
      if (given.every((g) => names.includes(g)) && required.every((r) => given.includes(r))) {
        const parameters: Record<string, number> = {};
        for (const p of model.parameters) parameters[p.name] = src.parameters[p.name] ?? p.defaultValue!;
        if (src.range_nm && !(src.range_nm[0] < src.range_nm[1])) throw new InputError('design-format', `${role}: range_nm needs min < max`, at);
        return { spec: model.spec, terms, urbach, parameters, range_nm: src.range_nm ?? null };
      }
    }
  }
  if (first?.error && !first.names.length) throw new InputError(first.error.rule, `${role}: ${first.error.message}`, at);
  throw new InputError(
    'stack-model-parameters',
    `${role}: the parameters ${given.join(', ') || '(none)'} do not fit model ${src.model}${src.terms ? ` with ${src.terms} terms` : ''}; it takes ${first?.names.join(', ')} (more terms: B2, C2, …)`,
    at,
  );
}

// ---------------------------------------------------------------------------------------------------------
// Computation (no I/O except the cached CIE tables): the function a worker runs

export interface StackColour {
  reflected: Colour;
  transmitted: Colour;
}

export interface StackResult {
  angle_deg: number;
  polarization: StackPolarization;
  wavelength_nm: number[];
  R: number[];
  T: number[];
  A: number[];
  Rs: number[];
  Rp: number[];
  Ts: number[];
  Tp: number[];
  psi_deg: number[];
  delta_deg: number[];
  /** Colour under D65 (2° observer) on 380–780 nm at 5 nm; null when a material does not cover that range. */
  colour: StackColour | null;
  sweep?: { layer: number; layer_role: string; rows: Array<{ thickness_nm: number } & StackColour> };
}

export interface StackReport {
  design: {
    name: string | null;
    notes: string | null;
    file: string | null;
    layers: number;
    substrate: { thickness_mm: number | null; incoherent: boolean };
  };
  materials: Array<{
    role: string;
    source: ResolvedMaterial['source'];
    ref: string | null;
    sha256: string | null;
    status: VersionStatus | null;
    describe: string;
  }>;
  options: { polarization: StackPolarization; extrapolate: boolean; angles_deg: number[]; colour_grid_nm: [number, number, number] };
  notes: string[];
  notices: string[];
  warnings: string[];
  results: StackResult[];
}

export class OutOfRange extends InputError {}

/** n, k of a material on a grid, refusing wavelengths it does not cover (named with its range). */
/**
 * n, k of a material on the grid `wl`. `partNk` gives the n, k of a mixture's parts (default: this function), so a caller
 * that already has a part's n, k (the fitted film a roughness layer mixes with void) does not evaluate it again.
 */
export function materialNk(
  m: ResolvedMaterial,
  wl: number[],
  extrapolate: boolean,
  purpose: string,
  partNk: (part: ResolvedMaterial) => StackMedium = (part) => materialNk(part, wl, extrapolate, purpose),
): StackMedium {
  const size = wl.length;
  let n: ArrayLike<number>, k: ArrayLike<number>;
  let fresh = false; // n, k are new arrays of this call, no copy needed
  const refuse = (range: [number, number], what: string, hint: string) => {
    const outside = wl.find((w) => w < range[0] * (1 - 1e-12) || w > range[1] * (1 + 1e-12));
    if (outside !== undefined) {
      throw new OutOfRange(
        'stack-out-of-range',
        `${m.role} (${m.ref ?? m.describe}) ${what} ${range[0]}–${range[1]} nm; ${outside} nm is outside it (${purpose})${hint}`,
        { field: m.field },
      );
    }
  };
  if (m.mix) {
    ({ n, k } = mixNk(m.mix, wl.length, partNk));
    fresh = true;
  } else if (m.constant) {
    n = new Array(size).fill(m.constant.n);
    k = new Array(size).fill(m.constant.k);
  } else if (m.model) {
    if (m.model.range_nm && !extrapolate) refuse(m.model.range_nm, 'has a model valid over', `; ${optionRef('extrapolate')} evaluates it outside`);
    ({ n, k } = buildModel(m.model.spec, { terms: m.model.terms, urbach: m.model.urbach }).nk(wl, m.model.parameters));
  } else if (m.content?.fit) {
    if (!extrapolate) refuse(usableRangeNm(m.content), 'has a model fitted over', `; ${optionRef('extrapolate')} evaluates it outside`);
    ({ n, k } = evaluateFitReport(m.content.fit as unknown as FitReport, wl));
  } else {
    const table = (m.table ?? m.content!.table)!;
    refuse(
      [table.wavelengthNm[0], table.wavelengthNm[table.wavelengthNm.length - 1]],
      'is a measured table over',
      '; a table is never extrapolated: fit a model to it',
    );
    ({ n, k } = evaluateTable(table, wl, 'linear'));
  }
  for (let i = 0; i < size; i++) {
    if (!Number.isFinite(n[i]) || !Number.isFinite(k[i]) || n[i] < 0 || k[i] < 0) {
      throw new InputError(
        'stack-nk-invalid',
        `${m.role} (${m.ref ?? m.describe}) gives n = ${n[i]}, k = ${k[i]} at ${wl[i]} nm: a stack needs finite n ≥ 0 and k ≥ 0`,
        { field: m.field },
      );
    }
  }
  return fresh ? { n, k } : { n: Float64Array.from(n), k: Float64Array.from(k) };
}

/** n, k of a mixture: each part on the grid, mixed as permittivities ε = (n + ik)², k ≥ 0 (see src/stack/effective-medium.ts). */
function mixNk(
  mix: NonNullable<ResolvedMaterial['mix']>,
  size: number,
  partNk: (part: ResolvedMaterial) => StackMedium,
): StackMedium & { n: Float64Array; k: Float64Array } {
  const [a, b] = mix.materials.map(partNk);
  const n = new Float64Array(size),
    k = new Float64Array(size);
  const e = new Float64Array(2);
  for (let i = 0; i < size; i++) {
    // ε = (n + ik)² = n² − k² + 2ink (src/optics/permittivity.ts)
    const aRe = a.n[i] * a.n[i] - a.k[i] * a.k[i],
      aIm = 2 * a.n[i] * a.k[i];
    const bRe = b.n[i] * b.n[i] - b.k[i] * b.k[i],
      bIm = 2 * b.n[i] * b.k[i];
    if (mix.rule === 'bruggeman') bruggemanInto(aRe, aIm, bRe, bIm, mix.fraction, e);
    else {
      const m = mixPermittivity(mix.rule, { re: aRe, im: aIm }, { re: bRe, im: bIm }, mix.fraction);
      e[0] = m.re;
      e[1] = m.im;
    }
    // A lossless mixture can come out with Im ε of rounding size below zero; that is k = 0, not a refusal.
    const nk = nkFromEps(e[0], e[1] < 0 && -e[1] <= 1e-13 * Math.abs(e[0]) ? 0 : e[1]);
    n[i] = nk.n;
    k[i] = nk.k;
  }
  return { n, k };
}

interface Media {
  ambient: StackMedium;
  layers: StackMedium[];
  substrate: StackMedium;
}

function mediaOn(design: ResolvedDesign, wl: number[], extrapolate: boolean, purpose: string): Media {
  const ambient = materialNk(design.ambient, wl, extrapolate, purpose);
  const absorbing = Array.from(ambient.k).findIndex((k) => k !== 0);
  if (absorbing >= 0) {
    throw new InputError(
      'stack-ambient-absorbing',
      `the ambient (${design.ambient.ref ?? design.ambient.describe}) has k = ${ambient.k[absorbing]} at ${wl[absorbing]} nm: R and T need a lossless ambient (k = 0)`,
      {
        field: design.ambient.field,
      },
    );
  }
  return {
    ambient,
    layers: design.layers.map((l) => materialNk(l.material, wl, extrapolate, purpose)),
    substrate: materialNk(design.substrate.material, wl, extrapolate, purpose),
  };
}

function solve(design: ResolvedDesign, media: Media, wl: number[], angle: number, thicknessOverride?: { index: number; nm: number }): StackSpectra {
  return solveStack(
    {
      wavelengthNm: wl,
      ambient: media.ambient,
      layers: media.layers.map((m, i) => ({
        ...m,
        thicknessNm: thicknessOverride?.index === i ? thicknessOverride.nm : design.layers[i].thickness_nm,
      })),
      substrate: media.substrate,
      incoherentSubstrateMm: design.substrate.incoherent ? (design.substrate.thickness_mm ?? undefined) : undefined,
    },
    angle,
  );
}

function pick(s: StackSpectra, pol: StackPolarization): { R: Float64Array; T: Float64Array } {
  if (pol === 's') return { R: s.Rs, T: s.Ts };
  if (pol === 'p') return { R: s.Rp, T: s.Tp };
  return { R: s.Rs.map((v, i) => (v + s.Rp[i]) / 2), T: s.Ts.map((v, i) => (v + s.Tp[i]) / 2) };
}

function colourPair(s: StackSpectra, pol: StackPolarization, cie: CieTables): StackColour {
  const { R, T } = pick(s, pol);
  return { reflected: colourOf(R, cie), transmitted: colourOf(T, cie) };
}

/** A material and, for a mixture, its parts depth-first: every pin of the design shows in the report. */
function withMixParts(m: ResolvedMaterial): ResolvedMaterial[] {
  return m.mix ? [m, ...m.mix.materials.flatMap(withMixParts)] : [m];
}

/** The whole computation of a resolved design: spectra per angle, colour, and the thickness sweep. */
export function computeStack(design: ResolvedDesign, options: StackOptions, cie: CieTables = cieTables()): StackReport {
  const wl = options.wavelengthNm;
  const warnings = [...design.warnings];
  const notes: string[] = [];
  if (options.sweep && options.sweep.layer > design.layers.length) {
    throw new InputError(
      'bad-option',
      `${optionRef('sweep')} layer ${options.sweep.layer}: the design has ${design.layers.length} layer${design.layers.length === 1 ? '' : 's'} (numbered from 1 on the ambient side)`,
      { field: 'sweep' },
    );
  }
  const media = mediaOn(design, wl, options.extrapolate, 'asked wavelengths');
  const colourGrid = [...COLOUR_GRID_NM];
  let colourMedia: Media | null = null;
  try {
    colourMedia = mediaOn(design, colourGrid, options.extrapolate, 'colour needs 380–780 nm');
  } catch (err) {
    if (!(err instanceof OutOfRange)) throw err;
    if (options.sweep)
      throw new InputError('stack-sweep-colour', `${optionRef('sweep')} computes colours, which need 380–780 nm: ${err.message}`, err.location);
    warnings.push(`colour is null: ${err.message}`);
  }
  if (design.substrate.incoherent) {
    notes.push(
      `R and T include the substrate's back surface (incoherent ${design.substrate.thickness_mm} mm substrate, exit into the ambient); Ψ and Δ describe the coated front surface alone and leave the back surface out`,
    );
  } else notes.push('the substrate is semi-infinite: no back surface; T is the light transmitted into it');
  notes.push('Ψ, Δ: ρ = rp/rs = tan Ψ·e^{iΔ}, Azzam & Bashara convention with N = n − ik (registry k ≥ 0), Δ in [0, 360)');

  const results = options.anglesDeg.map((angle): StackResult => {
    const s = solve(design, media, wl, angle);
    const { R, T } = pick(s, options.polarization);
    const result: StackResult = {
      angle_deg: angle,
      polarization: options.polarization,
      wavelength_nm: wl,
      R: Array.from(R),
      T: Array.from(T),
      A: Array.from(R, (r, i) => 1 - r - T[i]),
      Rs: Array.from(s.Rs),
      Rp: Array.from(s.Rp),
      Ts: Array.from(s.Ts),
      Tp: Array.from(s.Tp),
      psi_deg: Array.from(s.psiDeg),
      delta_deg: Array.from(s.deltaDeg),
      colour: colourMedia ? colourPair(solve(design, colourMedia, colourGrid, angle), options.polarization, cie) : null,
    };
    if (options.sweep && colourMedia) {
      const index = options.sweep.layer - 1;
      result.sweep = {
        layer: options.sweep.layer,
        layer_role: `layer ${options.sweep.layer} (${design.layers[index].material.ref ?? design.layers[index].material.describe})`,
        rows: sweepThicknesses(options.sweep).map((nm) => ({
          thickness_nm: nm,
          ...colourPair(solve(design, colourMedia!, colourGrid, angle, { index, nm }), options.polarization, cie),
        })),
      };
    }
    return result;
  });

  const all = [design.ambient, ...design.layers.map((l) => l.material), design.substrate.material];
  return {
    design: {
      name: design.name,
      notes: design.notes,
      file: design.file,
      layers: design.layers.length,
      substrate: { thickness_mm: design.substrate.thickness_mm, incoherent: design.substrate.incoherent },
    },
    materials: all
      .flatMap(withMixParts)
      .map((m) => ({ role: m.role, source: m.source, ref: m.ref, sha256: m.sha256, status: m.status, describe: m.describe })),
    options: { polarization: options.polarization, extrapolate: options.extrapolate, angles_deg: options.anglesDeg, colour_grid_nm: [380, 780, 5] },
    notes,
    notices: design.notices,
    warnings,
    results,
  };
}

/** A stack request as a front door read it: the design and the options still as given. */
export interface StackRequest {
  /** The design: its JSON text (a file; refusals then carry line and column) or a parsed value (a request body). */
  design: string | unknown;
  /** Name of the design in messages, and the base of its relative file sources. */
  designFile: string;
  /** The wavelengths as given (`--at`, `at`). */
  at: string;
  options: StackOptionText;
  /** How the front door names its options in refusals (default: the command line's flags). */
  names?: { at: string; angle: string; polarization: string; sweep: string };
  /** Where registry refs come from and whether file sources are allowed (ResolveContext without the design). */
  resolve: Omit<ResolveContext, 'designFile' | 'designText' | 'lock'>;
  /** The lockfile the refs resolve through, read only once the design and options passed (so they are refused first). */
  lock?: () => { lockfile: Lockfile; file: string } | undefined;
  /** The most work (layers × wavelengths × angles × sweep steps) allowed, checked before anything is resolved. */
  maxWork?: { limit: number; setting: string; field: string };
  /** Runs the compute: by default here; the API passes its worker pool (with the request's abort signal). */
  compute?: (design: ResolvedDesign, options: StackOptions) => Promise<StackReport> | StackReport;
}

/**
 * A stack from request to report, for every front door (the `stack` command, POST /api/v1/stack): parse the
 * design and the options, cap the work, resolve the materials (through the lockfile if given), compute.
 */
export async function runStackRequest(request: StackRequest): Promise<StackReport> {
  const names = request.names ?? {
    at: optionRef('at'),
    angle: optionRef('angle'),
    polarization: optionRef('polarization'),
    sweep: optionRef('sweep'),
  };
  const designText = typeof request.design === 'string' ? request.design : null;
  const design = parseStackDesign(request.design, request.designFile);
  const options = parseStackOptions(request.options, parseWavelengthList(request.at, names.at), names);
  if (request.maxWork) {
    const { limit, setting, field } = request.maxWork;
    const work = stackWork(design, options);
    if (work > limit) {
      throw new InputError(
        'stack-too-much-work',
        `this request asks for ${work} units of work (layers × wavelengths × angles × sweep steps); at most ${limit} per request (setting ${setting})`,
        { field },
      );
    }
  }
  const resolved = await resolveStackDesign(design, { ...request.resolve, designFile: request.designFile, designText, lock: request.lock?.() });
  return (request.compute ?? computeStack)(resolved, options);
}
