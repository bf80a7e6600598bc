/**
 * Server mode: the registry operations as requests to an nkledger server (src/api). The server decides who
 * acts, from the token; a name the client offers (--as, NKLEDGER_USER) is refused before anything is sent,
 * so nobody believes it was used. Reads that compute (eval, inspect, fit, kk of a version) fetch the
 * version's content and compute here; writes and checks that must be trusted run on the server.
 */
import { existsSync, linkSync, rmSync } from 'node:fs';
import { open } from 'node:fs/promises';
import { basename } from 'node:path';
import { ConflictError, EnvironmentError, InputError, IntegrityError, NotFoundError } from '../errors.ts';
import { checkSlug, parseRef } from '../registry/refs.ts';
import { IMPORT_OPTIONS, type ImportFlags } from '../io/import-options.ts';
import { fieldsFromValues } from '../io/option-spec.ts';
import type { VersionDetail, VersionRecord } from '../registry/types.ts';
import { FIT_OPTIONS, type FitOptionText } from '../service/fit-options.ts';
import type { MeasurementImported } from '../service/import-measurement.ts';
import type { LoadedSource } from '../service/table-source.ts';
import type { TokenInfo } from '../service/tokens.ts';
import type { ServerClient } from './http.ts';
import type { ImportRequest, RegistryOperations } from './operations.ts';

/** `slug@N` exactly: the form the version routes take in their path. */
const PINNED = /^([a-z0-9]+(?:-[a-z0-9]+)*)@([1-9][0-9]{0,8})$/;

const enc = encodeURIComponent;

export interface ServerRegistryOptions {
  /** How the user tried to name who acts (e.g. `--as bob`), refused on every write; undefined when they did not. */
  actorGiven?: string;
}

export function serverRegistry(client: ServerClient, options: ServerRegistryOptions = {}): RegistryOperations {
  const refuseActor = () => {
    if (options.actorGiven === undefined) return;
    throw new InputError(
      'identity-from-token',
      `${options.actorGiven}: in server mode the server records who acts from the token sent, so a name cannot be chosen; remove it (each person logs in with their own token: nkledger login ${client.url})`,
      {},
      { option: 'as' },
    );
  };
  /** The path of a version for the lifecycle routes, resolving other references (slug@sha256:…, a bare slug) first. */
  const versionPath = async (ref: string) => {
    let pin = PINNED.exec(ref);
    if (!pin) pin = PINNED.exec((await client.json<VersionDetail>('GET', `/refs/${enc(ref)}`)).ref);
    return `/materials/${pin![1]}/versions/${pin![2]}`;
  };
  const lifecycle = async <T = VersionRecord>(ref: string, action: string, body?: unknown) => {
    refuseActor();
    return client.json<T>('POST', `${await versionPath(ref)}/${action}`, { json: body ?? {} });
  };

  return {
    materials: async (search) => (await client.json<{ materials: [] }>('GET', '/materials', { query: { q: search } })).materials,
    history: (slug) => client.json('GET', `/materials/${enc(slug)}/history`),
    version: (ref) => client.json('GET', `/refs/${enc(ref)}`),
    async loadVersion(ref): Promise<LoadedSource> {
      let v: VersionDetail;
      try {
        v = await client.json<VersionDetail>('GET', `/refs/${enc(ref)}`);
      } catch (err) {
        // A bare word that is neither a file nor a material is most likely a mistyped file name: say both, as file mode does.
        if (err instanceof InputError && err.rule === 'material-unknown' && parseRef(ref).kind === 'latest')
          throw new NotFoundError(`no file "${ref}" and no material "${ref}" in the registry ${client.url}`, 'source-not-found');
        throw err;
      }
      // What is computed on here must be the content the hash names: recomputed, as the server's own reads do.
      // (Loaded here: the registry's record code is not needed by the commands that only print what the server says.)
      const { versionSha256 } = await import('../registry/records.ts');
      if (versionSha256(v.content, v.provenance) !== v.sha256)
        throw new IntegrityError(
          `${v.ref}: the content received from ${client.url} does not hash to its SHA-256 ${v.sha256.slice(0, 12)}…; it was altered on the way (a proxy?) or on the server; nothing was computed`,
        );
      return {
        table: v.content.table,
        content: v.content,
        detected: {
          source: 'registry',
          ref: v.ref,
          sha256: v.sha256,
          status: v.status,
          model: v.content.fit?.model ?? null,
          has_table: v.content.table !== null,
        },
        warnings: v.warnings,
        notices: v.notices,
        kAbsent: v.provenance.absent_columns?.includes('k') ?? false,
      };
    },
    diff: (a, b) => client.json('GET', '/diff', { query: { a, b } }),
    exportVersion: (ref, format, o) =>
      client.json('GET', `/refs/${enc(ref)}/export`, {
        query: { format, x_unit: o.xUnit, step_nm: o.stepNm === undefined ? undefined : String(o.stepNm) },
      }),
    createMaterial(input) {
      refuseActor();
      checkSlug(input.slug); // refused here with the service's own words (the route's schema words it for HTTP)
      return client.json('POST', '/materials', { json: input });
    },
    editMaterial(slug, edit) {
      refuseActor();
      const body = { name: edit.name, description: edit.description, tags: edit.tags, add_tags: edit.addTags, remove_tags: edit.removeTags };
      return client.json('PATCH', `/materials/${enc(slug)}`, { json: body });
    },
    importMeasurements(request) {
      refuseActor();
      return upload(client, request);
    },
    approve: (ref, o) => lifecycle(ref, 'approve', o.acceptWarnings === undefined ? {} : { accept_warnings: o.acceptWarnings }),
    review() {
      refuseActor(); // whose queue it is comes from the token
      return client.json('GET', '/review');
    },
    retire: (ref, reason) => lifecycle(ref, 'retire', { reason }),
    withdraw: (ref, reason) => lifecycle(ref, 'withdraw', reason === undefined ? {} : { reason }),
    lockAdd: (lock, ref) => client.json('POST', '/locks/add', { query: { ref }, json: lock }),
    lockVerify: (lock, o) => client.json('POST', '/locks/verify', { query: { strict: o.strict ? 'true' : undefined }, json: lock }),
    lockOutdated: async (lock) => (await client.json<{ outdated: [] }>('POST', '/locks/outdated', { json: lock })).outdated,
    verify: () => client.json('GET', '/verify'),
    backup: (file) => downloadBackup(client, file),
    createToken(input) {
      refuseActor();
      return client.json('POST', '/tokens', { json: input });
    },
    listTokens: async (o) => {
      // "active" as the service means it: neither revoked nor expired.
      const { tokens } = await client.json<{ tokens: TokenInfo[] }>('GET', '/tokens');
      return o.activeOnly ? tokens.filter((t) => t.revoked_at === null && !t.expired) : tokens;
    },
    revokeToken(id) {
      refuseActor();
      return client.json('POST', `/tokens/${enc(id)}/revoke`, { json: {} });
    },
    settings: async () => (await client.json<{ settings: never }>('GET', '/settings')).settings,
    async setSetting(key, text) {
      refuseActor();
      return (await client.json<{ settings: never }>('PUT', `/settings/${enc(key)}`, { json: { text } })).settings;
    },
    async resetSetting(key) {
      refuseActor();
      return (await client.json<{ settings: never }>('DELETE', `/settings/${enc(key)}`)).settings;
    },
  };
}

/** The import and fit flags as the upload route's fields: the option tables both front doors are made from, spelled for HTTP. */
export function uploadFields(flags: ImportFlags, fit: { model: string; options: FitOptionText } | undefined, kk: boolean): Record<string, string> {
  return {
    ...fieldsFromValues(IMPORT_OPTIONS, { ...flags }),
    ...(kk ? {} : { kk: 'false' }),
    ...(fit && { fit: fit.model, ...fieldsFromValues(FIT_OPTIONS, { ...fit.options }) }),
  };
}

/** One file: the version upload route; several: the all-or-none import route (one "table" part each). */
async function upload(client: ServerClient, request: ImportRequest): Promise<MeasurementImported[]> {
  if (request.files.length === 0) throw new InputError('no-files', 'no files to import');
  const form = new FormData();
  // The server stores (and names in its messages) the last path component, as file mode does; messages
  // about the upload are renamed back to the name the user gave.
  const fileNames: Record<string, string> = {};
  for (const { bytes, file } of request.files) {
    const name = file === '<stdin>' ? 'stdin' : basename(file);
    fileNames[name] ??= file;
    form.append('table', new Blob([bytes as Uint8Array<ArrayBuffer>]), name);
  }
  for (const [k, v] of Object.entries(uploadFields(request.importFlags, request.fit, request.kk))) form.set(k, v);
  for (const [k, v] of Object.entries(request.provenance)) if (v !== undefined && v !== null) form.set(k, String(v));
  const onlyStdin = request.files.length === 1 && request.files[0].file === '<stdin>';
  if (onlyStdin && request.provenance.source_file === undefined) form.set('source_file', '<stdin>');
  const slug = enc(request.slug);
  if (request.files.length === 1)
    return [await client.json('POST', `/materials/${slug}/versions`, { body: form, fileNames: { ...fileNames, '<upload>': request.files[0].file } })];
  return (await client.json<{ versions: MeasurementImported[] }>('POST', `/materials/${slug}/imports`, { body: form, fileNames })).versions;
}

/**
 * The server streams a snapshot of its registry; it is written beside `file` and linked into place only when
 * complete, so a cut connection or a full disk never leaves a partial file under the name asked for.
 */
async function downloadBackup(client: ServerClient, file: string): Promise<{ path: string; pages: number }> {
  if (file.trim() === '') throw new InputError('backup-path', 'give the file to write the backup to');
  const exists = () => new ConflictError(`${file} already exists; choose a new file (backups never overwrite)`, 'backup-exists');
  if (existsSync(file)) throw exists();
  const response = await client.request('GET', '/backup', { accept: 'application/vnd.sqlite3' });
  const pages = Number(response.headers.get('x-nkledger-pages'));
  const partial = `${file}.partial-${process.pid}`;
  let out: Awaited<ReturnType<typeof open>> | undefined;
  try {
    out = await open(partial, 'wx');
    let bytes = 0;
    for await (const chunk of response.body) {
      bytes += chunk.length;
      await out.write(chunk);
    }
    if (bytes === 0) throw new Error('empty answer');
    await out.sync();
    await out.close();
    out = undefined;
    linkSync(partial, file);
    return { path: file, pages };
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'EEXIST') throw exists();
    if (err instanceof InputError || err instanceof EnvironmentError) throw err;
    if ((err as NodeJS.ErrnoException).code !== undefined)
      throw new InputError('backup-failed', `cannot write the backup: ${(err as Error).message}; nothing was kept`, { file });
    throw new EnvironmentError(
      'backup-interrupted',
      `the connection to ${client.url} broke during the backup (${(err as Error).message}); nothing was kept, try again`,
    );
  } finally {
    await out?.close();
    rmSync(partial, { force: true });
  }
}
