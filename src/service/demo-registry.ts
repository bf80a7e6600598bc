/**
 * The demo registry behind `npm start`: the invented Marrowick Optics tables (data/marrowick) run
 * through the real pipeline — import, dispersion fit, Kramers-Kronig check, approval — with a history
 * worth browsing: a deposition recipe that changed (its old version retired after a design pinned it),
 * a draft waiting for review, and a design lockfile. Every step is a service call the CLI and the API
 * also make; nothing is written to the database any other way.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Registry } from '../registry/open.ts';
import type { FitOptions } from '../fit/fit.ts';
import { createMaterial } from './materials.ts';
import { importMeasurement } from './import-measurement.ts';
import { approve, retire } from './lifecycle.ts';
import { emptyLockfile, lockAdd, lockVerify, writeLockfile, type LockVerifyReport } from './lock.ts';
import type { ProvenanceInput } from './provenance.ts';

/** Who does what in the demo lab (two people: the two-person rule holds). */
export const DEMO_EDITOR = 'r.okafor';
export const DEMO_APPROVER = 'm.lindqvist';

interface DemoImport {
  file: string;
  fit: FitOptions;
  provenance: ProvenanceInput;
}

interface DemoMaterial {
  slug: string;
  name: string;
  description: string;
  tags: string[];
}

const SE = { instrument: 'variable-angle ellipsometer (Marrowick bay 2)', method: 'spectroscopic-ellipsometry', angles_deg: '65,70,75' };

const MATERIALS: DemoMaterial[] = [
  {
    slug: 'sinx-pecvd',
    name: 'PECVD silicon nitride',
    description: 'Passivation and high-index layer; deposition recipe changed from A to the Si-rich B.',
    tags: ['nitride', 'pecvd', 'high-index'],
  },
  {
    slug: 'sio2-thermal',
    name: 'Thermal silicon oxide',
    description: 'Wet thermal oxide on Si, low-index reference layer.',
    tags: ['oxide', 'low-index'],
  },
  {
    slug: 'mgf2-evaporated',
    name: 'Evaporated magnesium fluoride',
    description: 'E-beam MgF2 for AR top layers.',
    tags: ['fluoride', 'low-index', 'ar'],
  },
  { slug: 'al2o3-ald', name: 'ALD aluminium oxide', description: 'TMA/H2O ALD, 200 C; medium-index and barrier layer.', tags: ['oxide', 'ald'] },
  {
    slug: 'ito-sputtered',
    name: 'Sputtered indium tin oxide',
    description: 'Transparent conductor; free-carrier absorption in the NIR.',
    tags: ['tco', 'conductor'],
  },
  { slug: 'a-si-h', name: 'Hydrogenated amorphous silicon', description: 'PECVD a-Si:H absorber, new in the lab.', tags: ['silicon', 'absorber'] },
];

const IMPORTS: Record<string, DemoImport> = {
  'sinx-a': {
    file: 'sinx-pecvd-recipe-a.csv',
    fit: { model: 'tauc-lorentz' },
    provenance: {
      ...SE,
      sample: 'MW-2291',
      substrate: 'Si(100)',
      process: 'recipe A: SiH4/NH3 = 1:8, 300 C',
      measured_on: '2025-03-04',
      operator: DEMO_EDITOR,
    },
  },
  'sinx-b': {
    file: 'sinx-pecvd-recipe-b.csv',
    fit: { model: 'tauc-lorentz' },
    provenance: {
      ...SE,
      sample: 'MW-2307',
      substrate: 'Si(100)',
      process: 'recipe B: SiH4/NH3 = 1:3 (Si-rich), 300 C',
      measured_on: '2025-09-18',
      operator: DEMO_EDITOR,
    },
  },
  sio2: {
    file: 'sio2-thermal.csv',
    fit: { model: 'sellmeier', terms: 3 },
    provenance: {
      ...SE,
      sample: 'MW-OX-114',
      substrate: 'Si(100)',
      process: 'wet oxidation 1000 C',
      measured_on: '2025-02-11',
      operator: DEMO_EDITOR,
    },
  },
  mgf2: {
    file: 'mgf2-evaporated.csv',
    fit: { model: 'cauchy', urbach: true },
    provenance: {
      instrument: 'UV-VIS-NIR spectrophotometer',
      method: 'spectrophotometry',
      sample: 'MW-EV-077',
      substrate: 'fused silica',
      process: 'e-beam, 250 C substrate, 95 nm',
      measured_on: '2025-05-27',
      operator: DEMO_EDITOR,
    },
  },
  al2o3: {
    file: 'al2o3-ald.csv',
    fit: { model: 'cauchy', urbach: true },
    provenance: {
      ...SE,
      sample: 'MW-ALD-0412',
      substrate: 'Si(100)',
      process: 'TMA/H2O, 200 C, 500 cycles',
      measured_on: '2025-06-30',
      operator: DEMO_EDITOR,
    },
  },
  ito: {
    file: 'ito-sputtered.tsv',
    fit: { model: 'tauc-lorentz+drude' },
    provenance: {
      ...SE,
      sample: 'MW-SP-1180',
      substrate: 'glass',
      process: 'DC sputtering, 1% O2, 150 C',
      measured_on: '2025-07-15',
      operator: DEMO_EDITOR,
    },
  },
  asi: {
    file: 'a-si-h.txt',
    fit: { model: 'tauc-lorentz' },
    provenance: {
      ...SE,
      sample: 'MW-2340',
      substrate: 'glass',
      process: 'PECVD SiH4/H2, 200 C',
      measured_on: '2025-10-02',
      operator: DEMO_EDITOR,
      notes: 'first a-Si:H run; awaiting review',
    },
  },
};

export interface DemoSummary {
  /** One line per step, for the console. */
  steps: string[];
  lockfile: string;
  lockReport: LockVerifyReport;
}

/**
 * Fill an empty registry with the demo history and write the design lockfile to `lockPath`.
 * `dataDir` is data/marrowick. Returns what happened, step by step.
 */
export async function buildDemoRegistry(registry: Registry, dataDir: string, lockPath: string): Promise<DemoSummary> {
  const steps: string[] = [];
  for (const m of MATERIALS) await createMaterial(registry, m, DEMO_EDITOR);
  const put = async (slug: string, key: string): Promise<string> => {
    const spec = IMPORTS[key];
    const bytes = new Uint8Array(readFileSync(join(dataDir, spec.file)));
    const v = await importMeasurement(registry, { slug, bytes, file: spec.file, fit: spec.fit, provenance: spec.provenance }, DEMO_EDITOR);
    steps.push(`imported ${spec.file} → ${v.ref} (fit ${spec.fit.model}, KK checked), draft`);
    return v.ref;
  };
  const ok = async (ref: string) => {
    await approve(registry, ref, DEMO_APPROVER);
    steps.push(`approved ${ref} by ${DEMO_APPROVER}`);
  };

  const sinxA = await put('sinx-pecvd', 'sinx-a');
  await ok(sinxA);
  for (const [slug, key] of [
    ['sio2-thermal', 'sio2'],
    ['mgf2-evaporated', 'mgf2'],
    ['al2o3-ald', 'al2o3'],
    ['ito-sputtered', 'ito'],
  ] as const) {
    await ok(await put(slug, key));
  }

  // A design made while recipe A was current pins it, with the low-index layers.
  let lock = emptyLockfile();
  for (const ref of [sinxA, 'sio2-thermal@1', 'mgf2-evaporated@1']) lock = (await lockAdd(registry, lock, ref)).lock;
  writeLockfile(lockPath, lock);
  steps.push(
    `design lockfile ${lockPath} pins ${Object.keys(lock.materials)
      .map((s) => `${s}@${lock.materials[s].version}`)
      .join(', ')}`,
  );

  // The recipe changes: B replaces A, and A is retired; the old pin still resolves, with a warning.
  await ok(await put('sinx-pecvd', 'sinx-b'));
  await retire(registry, sinxA, 'deposition recipe changed to B (Si-rich); recipe A is no longer run', DEMO_APPROVER);
  steps.push(`retired ${sinxA}: recipe changed`);

  // A new material waits for a second pair of eyes.
  await put('a-si-h', 'asi');
  return { steps, lockfile: lockPath, lockReport: await lockVerify(registry, lock) };
}
