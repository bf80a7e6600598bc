/** @jsxImportSource hono/jsx */
/**
 * Upload: choose (or drop) a CSV/TSV file, see what was read before anything is stored, try a model fit,
 * then store a draft with its provenance. The file waits in the registry for its session (web-sessions.ts)
 * so the preview works without JavaScript. Parsing and fitting run on the compute pool's threads, the
 * store is the API upload's `storeMeasurement`.
 */
import type { Hono } from 'hono';
import { InputError } from '../../errors.ts';
import { statusOf } from '../../http-status.ts';
import type { FitReport } from '../../fit/types.ts';
import { importOptionsFrom } from '../../io/import-options.ts';
import type { ImportOptions } from '../../io/parse-table.ts';
import { MODEL_CATALOGUE } from '../../models/catalogue.ts';
import { SPECTRAL_UNITS } from '../../optics/units.ts';
import { checkSlug } from '../../registry/refs.ts';
import { MEASUREMENT_METHODS } from '../../registry/schema.ts';
import { parseFitOptions } from '../../service/fit-options.ts';
import { storeMeasurement } from '../../service/import-measurement.ts';
import type { InspectReport } from '../../service/inspect.ts';
import { createMaterial, getMaterial, listMaterials } from '../../service/materials.ts';
import type { WebSession } from '../../service/web-sessions.ts';
import { dropPendingUpload, getPendingUpload, putPendingUpload, type PendingUpload } from '../../service/web-sessions.ts';
import type { NkTable } from '../../table.ts';
import type { PageContext, WebEnv } from '../context.ts';
import { fmt, Note, Notes, PAGE_WORDING, page, Plot, versionPath } from '../layout.tsx';
import { FitDetails } from '../parts.tsx';
import { decimateTable, fitPlot, nkPlot } from '../plots.ts';
import { requireSession } from '../session.ts';

/** The provenance a person types (file name and hash come from the file itself). */
const PROVENANCE_INPUTS = [
  ['sample', 'Sample', 'text', 'e.g. MO-2291 wafer 4, centre'],
  ['substrate', 'Substrate', 'text', 'e.g. Si (100)'],
  ['process', 'Process or recipe', 'text', 'e.g. PECVD recipe A, 300 °C'],
  ['instrument', 'Instrument', 'text', 'e.g. ellipsometer, bay 2'],
  ['angles_deg', 'Angles of incidence (°)', 'text', 'e.g. 55, 65, 75'],
  ['measured_on', 'Measured on', 'date', ''],
  ['operator', 'Operator', 'text', ''],
  ['notes', 'Notes', 'text', ''],
] as const;

type Form = Record<string, string>;

function textFields(body: Record<string, unknown>): Form {
  return Object.fromEntries(
    Object.entries(body)
      .filter((e): e is [string, string] => typeof e[1] === 'string')
      .map(([k, v]) => [k, v.slice(0, 20_000)]),
  );
}

function importOptionsOf(form: Form, file: string): ImportOptions {
  const given = (k: string) => (form[k]?.trim() ? form[k].trim() : undefined);
  return {
    ...importOptionsFrom(
      {
        inputUnit: given('input_unit'),
        columns: given('columns'),
        headerLine: given('header_line'),
        decimalComma: form.decimal_comma === 'on' ? true : undefined,
      },
      (key) => key.replace(/[A-Z]/g, (c) => `_${c.toLowerCase()}`),
    ),
    file,
  };
}

function fitOptionsOf(form: Form) {
  const model = form.model?.trim();
  if (!model) return undefined;
  const options = parseFitOptions(
    { terms: form.terms?.trim() || undefined, range: form.range?.trim() || undefined },
    (name) => `the “${name}” field`,
  );
  return { ...options, model };
}

export function registerUploadPages(app: Hono<WebEnv>, ctx: PageContext): void {
  app.get('/upload', async (c) => {
    const session = requireSession(c, 'editor');
    return c.html(await uploadFormPage(ctx, session, { material: c.req.query('material') ?? '' }));
  });

  app.post('/materials', async (c) => {
    const session = requireSession(c, 'editor');
    const form = textFields(await c.req.parseBody());
    try {
      const tags = (form.tags ?? '')
        .split(',')
        .map((t) => t.trim())
        .filter(Boolean);
      const material = await createMaterial(
        ctx.registry,
        { slug: form.slug ?? '', name: form.name ?? '', description: form.description, tags },
        session.principal.user,
      );
      return c.redirect(`/upload?material=${encodeURIComponent(material.slug)}`, 303);
    } catch (err) {
      if (!(err instanceof InputError) || statusOf(err) >= 500) throw err;
      return c.html(await uploadFormPage(ctx, session, form, err), statusOf(err) as 400);
    }
  });

  app.post('/upload', async (c) => {
    const session = requireSession(c, 'editor');
    const body = await c.req.parseBody();
    const form = textFields(body);
    try {
      const file = body.table;
      if (!(file instanceof File) || file.size === 0)
        throw new InputError('upload-no-table', 'choose a file to upload (CSV or TSV)', {}, { option: 'table' });
      const slug = checkSlug(form.material ?? '');
      await getMaterial(ctx.registry, slug); // an unknown material is refused now, not after the preview
      const fileName = file.name.replace(/^.*[\\/]/, '') || 'upload.csv';
      const bytes = new Uint8Array(await file.arrayBuffer());
      const importOptions = importOptionsOf(form, fileName);
      await ctx.compute.run({ kind: 'inspect', bytes, importOptions }); // refuse what does not read before keeping it
      const pending = await putPendingUpload(ctx.registry, session, { slug, fileName, bytes, importOptions });
      return c.redirect(`/upload/${pending.id}`, 303);
    } catch (err) {
      if (!(err instanceof InputError) || statusOf(err) >= 500) throw err;
      return c.html(await uploadFormPage(ctx, session, form, err), statusOf(err) as 400);
    }
  });

  app.get('/upload/:id', async (c) => {
    const session = requireSession(c, 'editor');
    const pending = await getPendingUpload(ctx.registry, session, c.req.param('id'));
    return c.html(await previewPage(ctx, session, pending, {}));
  });

  app.post('/upload/:id/fit', async (c) => {
    const session = requireSession(c, 'editor');
    const pending = await getPendingUpload(ctx.registry, session, c.req.param('id'));
    const form = textFields(await c.req.parseBody());
    try {
      const fit = fitOptionsOf(form);
      if (!fit) throw new InputError('fit-model', 'pick a model to fit', {}, { option: 'model' });
      const result = await ctx.compute.run({ kind: 'fit', bytes: pending.bytes, importOptions: pending.importOptions, fit });
      return c.html(await previewPage(ctx, session, pending, form, { report: result.report, warnings: result.warnings }));
    } catch (err) {
      if (!(err instanceof InputError) || statusOf(err) >= 500) throw err;
      return c.html(await previewPage(ctx, session, pending, form, undefined, err), statusOf(err) as 400);
    }
  });

  app.post('/upload/:id/store', async (c) => {
    const session = requireSession(c, 'editor');
    const pending = await getPendingUpload(ctx.registry, session, c.req.param('id'));
    const form = textFields(await c.req.parseBody());
    try {
      const provenance = Object.fromEntries(
        [...PROVENANCE_INPUTS.map(([name]) => name), 'method'].flatMap((name) => (form[name]?.trim() ? [[name, form[name].trim()]] : [])),
      );
      const input = {
        bytes: pending.bytes,
        file: pending.fileName,
        importOptions: pending.importOptions,
        fit: fitOptionsOf(form),
        kk: form.kk === 'on',
      };
      const prepared = await ctx.compute.run({ kind: 'measurement', input });
      const stored = await storeMeasurement(
        ctx.registry,
        { slug: pending.slug, file: pending.fileName, provenance },
        prepared,
        session.principal.user,
      );
      await dropPendingUpload(ctx.registry, session, pending.id);
      return c.redirect(versionPath(stored.ref), 303);
    } catch (err) {
      if (!(err instanceof InputError) || statusOf(err) >= 500) throw err;
      return c.html(await previewPage(ctx, session, pending, form, undefined, err), statusOf(err) as 400);
    }
  });

  app.post('/upload/:id/discard', async (c) => {
    const session = requireSession(c, 'editor');
    await dropPendingUpload(ctx.registry, session, c.req.param('id'));
    return c.redirect('/upload', 303);
  });
}

async function uploadFormPage(ctx: PageContext, session: WebSession, form: Form, error?: InputError): Promise<string> {
  const materials = await listMaterials(ctx.registry);
  return page({
    title: 'Upload',
    session,
    current: 'upload',
    children: (
      <>
        <h1>Upload a measured table</h1>
        <p>Nothing is stored until you have seen what was read and chosen “Store as draft”. A draft needs another person’s approval before use.</p>
        {error && <Note kind="bad">{error.describe(PAGE_WORDING)}</Note>}
        <form method="post" action="/upload" enctype="multipart/form-data">
          <input type="hidden" name="csrf" value={session.csrf} />
          <label for="material">Material</label>
          <select id="material" name="material" required>
            <option value="">choose a material…</option>
            {materials.map((m) => (
              <option value={m.slug} selected={m.slug === form.material}>
                {m.name} ({m.slug})
              </option>
            ))}
          </select>
          <div class="dropzone">
            <label for="table">File (CSV, TSV or the text an instrument exports)</label>
            <input type="file" id="table" name="table" required accept=".csv,.tsv,.txt,.dat,text/csv,text/plain,text/tab-separated-values" />
            <p class="hint dropped" aria-live="polite">
              You may also drop the file here.
            </p>
          </div>
          <fieldset>
            <legend>How to read it (leave empty to let nkledger detect)</legend>
            <div class="row">
              <div>
                <label for="input_unit">Unit of the first column</label>
                <select id="input_unit" name="input_unit">
                  <option value="">detect from the header</option>
                  {SPECTRAL_UNITS.map((u) => (
                    <option value={u} selected={form.input_unit === u}>
                      {u}
                    </option>
                  ))}
                </select>
              </div>
              <div>
                <label for="columns">Column roles</label>
                <input type="text" id="columns" name="columns" value={form.columns ?? ''} aria-describedby="columns-hint" />
                <p class="hint" id="columns-hint">
                  e.g. wavelength_nm,n,k — only when the header is missing or unusual
                </p>
              </div>
              <div>
                <label for="header_line">Header line</label>
                <input type="number" id="header_line" name="header_line" min={1} value={form.header_line ?? ''} />
              </div>
              <div>
                <input type="checkbox" id="decimal_comma" name="decimal_comma" checked={form.decimal_comma === 'on'} />{' '}
                <label class="plain" for="decimal_comma">
                  decimal comma (1,45)
                </label>
              </div>
            </div>
          </fieldset>
          <p>
            <button type="submit">Read the file</button>
          </p>
        </form>
        <h2>A material not listed yet?</h2>
        <form method="post" action="/materials">
          <input type="hidden" name="csrf" value={session.csrf} />
          <div class="row">
            <div>
              <label for="new-slug">Slug</label>
              <input type="text" id="new-slug" name="slug" required maxlength={64} value={form.slug ?? ''} aria-describedby="slug-hint" />
              <p class="hint" id="slug-hint">
                lower-case letters, digits and hyphens, e.g. tio2-ebeam; it names the material in pins (slug@N) for good
              </p>
            </div>
            <div>
              <label for="new-name">Name</label>
              <input type="text" id="new-name" name="name" required maxlength={200} value={form.name ?? ''} />
            </div>
          </div>
          <label for="new-description">Description</label>
          <input type="text" id="new-description" name="description" maxlength={5000} value={form.description ?? ''} />
          <label for="new-tags">Tags (comma-separated)</label>
          <input type="text" id="new-tags" name="tags" maxlength={500} value={form.tags ?? ''} />
          <p>
            <button type="submit" class="quiet">
              Create the material
            </button>
          </p>
        </form>
      </>
    ),
  });
}

async function previewPage(
  ctx: PageContext,
  session: WebSession,
  pending: PendingUpload,
  form: Form,
  fit?: { report: FitReport; warnings: string[] },
  error?: InputError,
): Promise<string> {
  const { report, table } = await ctx.compute.run({ kind: 'inspect', bytes: pending.bytes, importOptions: pending.importOptions });
  const base = `/upload/${pending.id}`;
  return page({
    title: `Preview of ${pending.fileName}`,
    session,
    current: 'upload',
    children: (
      <>
        <h1>What was read from {pending.fileName}</h1>
        <p>
          For material <a href={`/materials/${pending.slug}`}>{pending.slug}</a>. Nothing is stored yet; this preview is kept for an hour, for you
          only.
        </p>
        {error && <Note kind="bad">{error.describe(PAGE_WORDING)}</Note>}
        <ReadReport report={report} table={table} name={pending.fileName} />
        {fit && (
          <>
            <h2>Trial fit: {fit.report.model} (not stored)</h2>
            <Notes kind="warn" items={fit.warnings} />
            <Plot
              svg={fitPlot(table, fit.report, `${pending.fileName}: measured vs ${fit.report.model}, with residuals`)}
              label={`Trial ${fit.report.model} fit with residuals`}
            />
            <FitDetails fit={fit.report} />
          </>
        )}
        <h2>Fit and store</h2>
        <form method="post" action={`${base}/store`}>
          <input type="hidden" name="csrf" value={session.csrf} />
          <fieldset>
            <legend>Model</legend>
            <div class="row">
              <div>
                <label for="model">Model to fit</label>
                <select id="model" name="model">
                  <option value="">none (store the table only)</option>
                  {MODEL_CATALOGUE.map((m) => (
                    <option value={m.name} selected={form.model === m.name}>
                      {m.name}
                    </option>
                  ))}
                </select>
              </div>
              <div>
                <label for="terms">Oscillators / terms</label>
                <input type="number" id="terms" name="terms" min={1} max={8} value={form.terms ?? ''} />
              </div>
              <div>
                <label for="range">Fit range (nm)</label>
                <input type="text" id="range" name="range" value={form.range ?? ''} placeholder="400:900" />
              </div>
            </div>
            <ul class="hint">
              {MODEL_CATALOGUE.map((m) => (
                <li>
                  <strong>{m.name}</strong>: {m.summary}
                </li>
              ))}
            </ul>
            <p>
              <input type="checkbox" id="kk" name="kk" checked={form.kk === undefined || form.kk === 'on'} />{' '}
              <label class="plain" for="kk">
                run the Kramers-Kronig check and store its verdict
              </label>
            </p>
          </fieldset>
          <fieldset>
            <legend>Provenance</legend>
            <p class="hint">The file’s name ({pending.fileName}), its SHA-256 and the lines above its table are recorded by themselves.</p>
            <label for="method">Method</label>
            <select id="method" name="method">
              <option value="">not recorded</option>
              {MEASUREMENT_METHODS.map((m) => (
                <option value={m} selected={form.method === m}>
                  {m}
                </option>
              ))}
            </select>
            {PROVENANCE_INPUTS.map(([name, label, type, hint]) => (
              <>
                <label for={name}>{label}</label>
                <input type={type} id={name} name={name} value={form[name] ?? ''} placeholder={hint || undefined} maxlength={2000} />
              </>
            ))}
          </fieldset>
          <div class="actions">
            <button type="submit" class="quiet" formaction={`${base}/fit`}>
              Try the fit (store nothing)
            </button>
            <button type="submit">Store as draft</button>
          </div>
        </form>
        <form method="post" action={`${base}/discard`} class="actions">
          <input type="hidden" name="csrf" value={session.csrf} />
          <button type="submit" class="danger">
            Discard this upload
          </button>
        </form>
      </>
    ),
  });
}

function ReadReport({ report, table, name }: { report: InspectReport; table: NkTable; name: string }) {
  const d = report.dialect;
  const shown = decimateTable(table);
  return (
    <>
      <Notes kind="warn" items={report.warnings} />
      <dl class="facts">
        <dt>Rows</dt>
        <dd>
          {report.points} wavelengths, {fmt(report.range_nm[0])}–{fmt(report.range_nm[1])} nm
          {report.data_lines && ` (file lines ${report.data_lines[0]}–${report.data_lines[1]})`}
        </dd>
        <dt>First column unit</dt>
        <dd>{report.x_unit}</dd>
        <dt>Read as</dt>
        <dd>
          {report.quantity === 'eps' ? 'ε1, ε2 (converted to n, k)' : 'n, k'}
          {report.has_k ? '' : '; no k column (k stored as 0, not measured)'}
          {report.has_sigma ? '; with uncertainties' : ''}
        </dd>
        <dt>n from–to</dt>
        <dd>
          {fmt(report.n_range[0], 4)} – {fmt(report.n_range[1], 4)}
        </dd>
        <dt>k from–to</dt>
        <dd>
          {fmt(report.k_range[0], 4)} – {fmt(report.k_range[1], 4)}
        </dd>
        {d && (
          <>
            <dt>Format</dt>
            <dd>
              {d.delimiter === '\t' ? 'tab' : d.delimiter === ' ' ? 'space' : `“${d.delimiter}”`}-separated,{' '}
              {d.decimal_comma ? 'decimal comma' : 'decimal point'}, {d.encoding}
              {d.header_line !== undefined && `, header on line ${d.header_line}`}
            </dd>
          </>
        )}
      </dl>
      <table>
        <caption>Columns</caption>
        <thead>
          <tr>
            <th scope="col">In the file</th>
            <th scope="col">Read as</th>
            {d?.units_row && <th scope="col">Units row</th>}
          </tr>
        </thead>
        <tbody>
          {report.columns.map((col, i) => (
            <tr>
              <td>
                <code>{col}</code>
              </td>
              <td>{report.roles[i] ?? ''}</td>
              {d?.units_row && <td>{d.units_row[i] ?? ''}</td>}
            </tr>
          ))}
        </tbody>
      </table>
      {report.preamble.length > 0 && (
        <>
          <h2>Lines above the table (kept in the provenance)</h2>
          <pre>{report.preamble.join('\n')}</pre>
        </>
      )}
      <Plot
        svg={nkPlot(`${name}: n and k as read`, { wavelength_nm: shown.wavelengthNm, n: shown.n, k: shown.k }, 'as read')}
        label={`n and k read from ${name}`}
      />
    </>
  );
}
