/**
 * File mode: the registry operations (src/client/operations.ts) on the local SQLite file through the service
 * layer, each opening the registry for the one call. Who acts: --as, else NKLEDGER_USER, else the login name.
 * Each operation loads its service module when called, so `nkledger list` does not load the fitter that
 * `import` needs (start-up: docs/startup.md).
 */
import type { RegistryOperations } from '../client/operations.ts';
import { EnvironmentError } from '../errors.ts';
import { importOptionsFrom } from '../io/import-options.ts';
import { environmentFault } from '../registry/faults.ts';
import { openRegistry, type OpenOptions, type Registry } from '../registry/open.ts';
import { actorFrom } from './admin-options.ts';
import { cliOptionName } from './import-options.ts';
import { cliIo } from './io.ts';

/**
 * Open the registry named by --db, run `use`, and close it whatever happens. A missing registry is refused
 * (exit 2, naming the path) unless `open.create` allows creating it; creating one is said on stderr.
 */
export async function withRegistry<T>(opts: { db?: string }, use: (registry: Registry) => T | Promise<T>, open: OpenOptions = {}): Promise<T> {
  const registry = await openRegistry(opts.db, { create: 'never', ...open });
  if (registry.created) cliIo().stderr.write(`nkledger: created a new registry at ${registry.path}\n`);
  try {
    return await use(registry);
  } catch (err) {
    throw environmentFault(err, registry.path) ?? err;
  } finally {
    await registry.close();
  }
}

export function fileRegistry(opts: { db?: string; as?: string }): RegistryOperations {
  const use = <T>(fn: (r: Registry) => T | Promise<T>, open: OpenOptions = {}) => withRegistry(opts, fn, open);
  const creating: OpenOptions = { create: 'if-folder-exists' };
  const actor = () => actorFrom(opts);
  const materials = () => import('../service/materials.ts');
  const lifecycle = () => import('../service/lifecycle.ts');
  const lock = () => import('../service/lock.ts');
  const tokens = () => import('../service/tokens.ts');
  const settings = () => import('../service/settings.ts');
  const admin = () => import('../service/registry-admin.ts');
  return {
    async materials(search) {
      const { listMaterials } = await materials();
      const { searchMaterials } = await import('../service/material-search.ts');
      return use((r) => (search === undefined ? listMaterials(r) : searchMaterials(r, search)));
    },
    history: async (slug) => {
      const { history } = await materials();
      return use((r) => history(r, slug));
    },
    version: async (ref) => {
      const { showVersion } = await import('../service/versions.ts');
      return use((r) => showVersion(r, ref));
    },
    // As before server mode: a missing registry is "no file X, and no registry to look it up in".
    loadVersion: async (ref) => {
      const { loadVersion, withExistingRegistry } = await import('../service/table-source.ts');
      return withExistingRegistry(ref, opts.db, (r) => loadVersion(r, ref));
    },
    diff: async (a, b) => {
      const { diffVersions } = await import('../service/diff.ts');
      return use((r) => diffVersions(r, a, b));
    },
    exportVersion: async (ref, format, o) => {
      const { exportVersion } = await import('../service/export-version.ts');
      return use((r) => exportVersion(r, ref, format, o));
    },
    createMaterial: async (input) => {
      const { createMaterial } = await materials();
      return use((r) => createMaterial(r, input, actor()), creating);
    },
    editMaterial: async (slug, edit) => {
      const { editMaterial } = await materials();
      return use((r) => editMaterial(r, slug, edit, actor()));
    },
    importMeasurements: async (request) => {
      const { parseFitOptions } = await import('../service/fit-options.ts');
      const { importMeasurements } = await import('../service/import-measurement.ts');
      const importOptions = importOptionsFrom(request.importFlags, cliOptionName);
      const fit = request.fit && { ...parseFitOptions(request.fit.options), model: request.fit.model };
      const inputs = request.files.map(({ bytes, file }) => ({
        slug: request.slug,
        bytes,
        file,
        importOptions,
        fit,
        kk: request.kk,
        provenance: request.provenance,
      }));
      return use((r) => importMeasurements(r, inputs, actor()), creating);
    },
    approve: async (ref, o) => {
      const { approve } = await lifecycle();
      return use((r) => approve(r, ref, actor(), o));
    },
    review: async () => {
      const { reviewQueue } = await import('../service/review.ts');
      return use((r) => reviewQueue(r, { user: actor(), role: null }));
    },
    retire: async (ref, reason) => {
      const { retire } = await lifecycle();
      return use((r) => retire(r, ref, reason, actor()));
    },
    withdraw: async (ref, reason) => {
      const { withdraw } = await lifecycle();
      return use((r) => withdraw(r, ref, actor(), reason));
    },
    lockAdd: async (lockfile, ref) => {
      const { lockAdd } = await lock();
      return use((r) => lockAdd(r, lockfile, ref));
    },
    lockVerify: async (lockfile, o) => {
      const { lockVerify } = await lock();
      return use((r) => lockVerify(r, lockfile, o));
    },
    lockOutdated: async (lockfile) => {
      const { lockOutdated } = await lock();
      return use((r) => lockOutdated(r, lockfile));
    },
    // Read-only first, so a damaged file is only read (its integrity check reports the damage) and nothing is
    // migrated; a registry from an older nkledger is opened writable to bring its schema up to date first.
    verify: async () => {
      const { verifyRegistry } = await admin();
      try {
        return await use(verifyRegistry, { readonly: true });
      } catch (err) {
        if (!(err instanceof EnvironmentError && err.rule === 'registry-needs-upgrade')) throw err;
        return use(verifyRegistry);
      }
    },
    backup: async (file) => {
      const { backup } = await admin();
      return use((r) => backup(r, file));
    },
    createToken: async (input) => {
      const { createToken } = await tokens();
      return use((r) => createToken(r, { ...input, createdBy: actor() }));
    },
    listTokens: async (o) => {
      const { listTokens } = await tokens();
      return use((r) => listTokens(r, o));
    },
    revokeToken: async (id) => {
      const { revokeToken } = await tokens();
      return use((r) => revokeToken(r, id, actor()));
    },
    settings: async () => {
      const { readSettings } = await settings();
      return use(readSettings);
    },
    setSetting: async (key, text) => {
      const { writeSettingText } = await settings();
      return use((r) => writeSettingText(r, key, text, actor()));
    },
    resetSetting: async (key) => {
      const { resetSetting } = await settings();
      return use((r) => resetSetting(r, key, actor()));
    },
  };
}
