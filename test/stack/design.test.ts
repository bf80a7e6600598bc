/**
 * The design file: the committed JSON Schema equals the one generated from the zod schema; refusals name the
 * file, line, column and field; model sources infer their terms; lockfiles pin registry refs.
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { emptyLockfile, lockAdd } from '../../src/service/lock.ts';
import { approve, createMaterial, importVersion } from '../../src/service/registry.ts';
import { computeStack, parseStackOptions, resolveStackDesign, type ResolveContext } from '../../src/service/stack.ts';
import { parseStackDesign, stackDesignJsonSchema } from '../../src/service/stack-design.ts';
import { cauchyTable, tempRegistry, type TempRegistry } from '../registry/helpers.ts';
import { refusal, refusalAsync } from './refusals.ts';

describe('design file format', () => {
  it('schemas/stack-design.schema.json is the schema generated from the code (npx tsx scripts/write-stack-schema.ts)', () => {
    const committed = JSON.parse(readFileSync(new URL('../../schemas/stack-design.schema.json', import.meta.url), 'utf8'));
    expect(committed).toEqual(JSON.parse(JSON.stringify(stackDesignJsonSchema())));
  });

  it('the example designs in data/marrowick parse', () => {
    for (const f of ['ar-coating', 'water-film', 'v-coat']) {
      const text = readFileSync(new URL(`../../data/marrowick/${f}.stack.json`, import.meta.url), 'utf8');
      expect(parseStackDesign(text, `${f}.stack.json`).substrate).toBeDefined();
    }
  });

  it('a bad value is refused with file, line, column and the field', () => {
    const text =
      '{\n  "layers": [\n    {"material": {"n": 1.4}, "thickness_nm": 10},\n    {"material": {"n": 1.4}, "thickness_nm": "thick"}\n  ],\n  "substrate": {"material": {"n": 1.5}}\n}\n';
    const e = refusal(() => parseStackDesign(text, 'd.json'));
    expect(e.rule).toBe('design-format');
    expect(e.location).toMatchObject({ file: 'd.json', line: 4, column: 46, field: 'layers.1.thickness_nm' });
    expect(e.describe()).toMatch(/^d\.json:4:46: layers\.1\.thickness_nm: .*number/);
  });

  it('a source that fits no kind names the four kinds; a half-right one names its own fault', () => {
    const none = refusal(() => parseStackDesign('{"layers": [], "substrate": {"material": {"index": 1.5}}}', 'd.json'));
    expect(none.message).toMatch(/one of \{"ref".*\{"file".*\{"n".*\{"model"/);
    const negativeK = refusal(() => parseStackDesign('{"layers": [], "substrate": {"material": {"n": 1.5, "k": -0.1}}}', 'd.json'));
    expect(negativeK.location.field).toBe('substrate.material.k');
    const extra = refusal(() => parseStackDesign('{"layers": [], "substrate": {"material": {"ref": "a@1", "file": "x.csv"}}}', 'd.json'));
    expect(extra.message).toMatch(/unknown field "file"/);
  });

  it('JSON syntax errors give line and column; an incoherent substrate needs its thickness', () => {
    const e = refusal(() => parseStackDesign('{\n  "layers": [],\n  "substrate": {"material": {"n": 1.5},}\n}', 'd.json'));
    expect(e.rule).toBe('design-json');
    expect(e.location).toMatchObject({ line: 3 });
    const t = refusal(() => parseStackDesign('{"layers": [], "substrate": {"material": {"n": 1.5}, "incoherent": true}}', 'd.json'));
    expect(t.location.field).toBe('substrate.incoherent');
  });
});

describe('sources', () => {
  const ctx: ResolveContext = { designFile: 'd.json', designText: null, allowFiles: true };
  const at = (wl: number[]) => parseStackOptions({}, wl);

  it('a Sellmeier model by its parameters: terms from the names, A = 1 by default (Malitson 1965 fused silica gives n(587.56 nm) = 1.45846)', async () => {
    // Malitson's coefficients (J. Opt. Soc. Am. 55, 1205 (1965), from memory; n_d is the published cross-check)
    const design = parseStackDesign({
      layers: [],
      substrate: {
        material: {
          model: 'sellmeier',
          parameters: { B1: 0.6961663, C1: 0.0684043 ** 2, B2: 0.4079426, C2: 0.1162414 ** 2, B3: 0.8974794, C3: 9.896161 ** 2 },
        },
      },
    });
    const report = computeStack(await resolveStackDesign(design, ctx), at([587.56]));
    const n = 1.45846;
    expect(report.results[0].R[0]).toBeCloseTo(((1 - n) / (1 + n)) ** 2, 5); // n quoted to 5 decimals moves R by < 1e-6
  });

  it("unknown parameters are refused with the model's list; a model range refuses outside it unless --extrapolate", async () => {
    const bad = parseStackDesign({ layers: [], substrate: { material: { model: 'cauchy', parameters: { A: 1.5, Bee: 0.01 } } } });
    const e = await refusalAsync(() => resolveStackDesign(bad, ctx));
    expect(e.rule).toBe('stack-model-parameters');
    expect(e.message).toMatch(/takes A, B, C/);
    const ranged = parseStackDesign({
      layers: [],
      substrate: { material: { model: 'cauchy', parameters: { A: 1.5, B: 0.004, C: 0 }, range_nm: [400, 1000] } },
    });
    const resolved = await resolveStackDesign(ranged, ctx);
    const out = refusal(() => computeStack(resolved, at([350])));
    expect(out.rule).toBe('stack-out-of-range');
    expect(out.message).toMatch(/substrate \(cauchy model\).*400–1000 nm; 350 nm is outside it.*`extrapolate`/);
    expect(computeStack(resolved, parseStackOptions({ extrapolate: true }, [350])).results[0].R[0]).toBeGreaterThan(0.04);
  });

  it('colour is null with a warning when a material does not cover 380–780 nm; --sweep then refuses', async () => {
    const design = parseStackDesign({
      layers: [{ material: { model: 'cauchy', parameters: { A: 1.5, B: 0.004, C: 0 }, range_nm: [500, 1000] }, thickness_nm: 100 }],
      substrate: { material: { n: 1.5 } },
    });
    const resolved = await resolveStackDesign(design, ctx);
    const report = computeStack(resolved, at([600, 700]));
    expect(report.results[0].colour).toBeNull();
    expect(report.warnings.join('\n')).toMatch(/colour is null: layer 1 .*500–1000 nm; 380 nm is outside it/);
    expect(refusal(() => computeStack(resolved, parseStackOptions({ sweep: '1=0:100:10' }, [600]))).rule).toBe('stack-sweep-colour');
  });

  it('an absorbing ambient is refused (R and T need a lossless incidence medium)', async () => {
    const resolved = await resolveStackDesign(
      parseStackDesign({ ambient: { material: { n: 1.5, k: 0.1 } }, layers: [], substrate: { material: { n: 1.5 } } }),
      ctx,
    );
    expect(refusal(() => computeStack(resolved, at([550]))).rule).toBe('stack-ambient-absorbing');
  });
});

describe('registry refs and lockfiles', () => {
  let t: TempRegistry;
  beforeAll(async () => {
    t = await tempRegistry();
    await createMaterial(t.registry, { slug: 'oxide', name: 'Oxide' }, 'ada');
    await importVersion(t.registry, { slug: 'oxide', table: cauchyTable(1.45) }, 'ada');
    await approve(t.registry, 'oxide@1', 'bob');
    await importVersion(t.registry, { slug: 'oxide', table: cauchyTable(1.47) }, 'ada');
    await approve(t.registry, 'oxide@2', 'bob');
  });
  afterAll(() => t.cleanup());
  const design = (ref: string) => parseStackDesign({ layers: [{ material: { ref }, thickness_nm: 100 }], substrate: { material: { n: 1.52 } } });
  const ctx = (lock?: ResolveContext['lock']): ResolveContext => ({
    registry: t.registry,
    designFile: 'd.json',
    designText: null,
    allowFiles: false,
    lock,
  });

  it("the output names every material's ref and sha256; a bare slug is the latest approved, with a notice", async () => {
    const r = await resolveStackDesign(design('oxide'), ctx());
    expect(r.layers[0].material).toMatchObject({ ref: 'oxide@2', source: 'registry', status: 'approved' });
    expect(r.notices.join()).toMatch(/not a pin/);
  });

  it('with a lockfile a bare slug resolves to the locked version; a ref the lock disagrees with is refused', async () => {
    const lock = { lockfile: (await lockAdd(t.registry, emptyLockfile(), 'oxide@1')).lock, file: 'design.lock.json' };
    const r = await resolveStackDesign(design('oxide'), ctx(lock));
    expect(r.layers[0].material.ref).toBe('oxide@1');
    expect(r.layers[0].material.sha256).toBe(lock.lockfile.materials.oxide.sha256);
    const e = await refusalAsync(() => resolveStackDesign(design('oxide@2'), ctx(lock)));
    expect(e.rule).toBe('stack-lock-disagrees');
    expect(e.message).toMatch(/names oxide@2, the lockfile design\.lock\.json pins oxide@1/);
    const hash = await refusalAsync(() => resolveStackDesign(design('oxide@sha256:00000000'), ctx(lock)));
    expect(hash.rule).toBe('stack-lock-disagrees');
    const tampered = { ...lock, lockfile: { ...lock.lockfile, materials: { oxide: { ...lock.lockfile.materials.oxide, sha256: '0'.repeat(64) } } } };
    expect((await refusalAsync(() => resolveStackDesign(design('oxide@1'), ctx(tampered)))).rule).toBe('stack-lock-mismatch');
    const missing = { ...lock, lockfile: emptyLockfile() };
    expect((await refusalAsync(() => resolveStackDesign(design('oxide@1'), ctx(missing)))).rule).toBe('stack-lock-missing');
  });

  it('a table version does not cover a wavelength: refused naming the material and its range', async () => {
    const resolved = await resolveStackDesign(design('oxide@1'), ctx());
    const e = refusal(() => computeStack(resolved, parseStackOptions({}, [350])));
    expect(e.message).toMatch(/layer 1 \(oxide@1\) is a measured table over 400–800 nm; 350 nm is outside it/);
  });

  it('refs inside a mixture are pinned and listed with their hash; an unknown one is refused at its nested field', async () => {
    const mixed = (ref: string) =>
      parseStackDesign({
        layers: [{ material: { mix: 'bruggeman', materials: [{ ref }, { n: 1 }], fraction: 0.5 }, thickness_nm: 5 }],
        substrate: { material: { n: 1.5 } },
      });
    const r = await resolveStackDesign(mixed('oxide@1'), ctx());
    expect(r.layers[0].material.mix!.materials[0]).toMatchObject({ ref: 'oxide@1', source: 'registry', role: 'layer 1, bruggeman part 1' });
    expect(r.layers[0].material.mix!.materials[0].sha256).toMatch(/^[0-9a-f]{64}$/);
    const e = await refusalAsync(() => resolveStackDesign(mixed('nitride@1'), ctx()));
    expect(e.location.field).toBe('layers.0.material.materials.0.ref');
  });

  it('a file inside a mixture is refused where files are (the HTTP API)', async () => {
    const fileMix = parseStackDesign({
      layers: [],
      substrate: { material: { mix: 'bruggeman', materials: [{ n: 1.5 }, { file: 'x.csv' }], fraction: 0.5 } },
    });
    const e = await refusalAsync(() => resolveStackDesign(fileMix, ctx()));
    expect(e.rule).toBe('stack-file-source');
    expect(e.location.field).toBe('substrate.material.materials.1.file');
  });
});
