/**
 * File mode: the registry operations (src/client/operations.ts) on the local SQLite file through the service
 * layer, each opening the registry for the one call. Who acts: --as, else NKLEDGER_USER, else the login name.
 */
import type { RegistryOperations } from '../client/operations.ts';
import { EnvironmentError } from '../errors.ts';
import { importOptionsFrom } from '../io/import-options.ts';
import type { OpenOptions, Registry } from '../registry/open.ts';
import { diffVersions } from '../service/diff.ts';
import { exportVersion } from '../service/export-version.ts';
import { parseFitOptions } from '../service/fit-options.ts';
import { importMeasurements } from '../service/import-measurement.ts';
import { approve, retire, withdraw } from '../service/lifecycle.ts';
import { lockAdd, lockOutdated, lockVerify } from '../service/lock.ts';
import { searchMaterials } from '../service/material-search.ts';
import { createMaterial, editMaterial, history, listMaterials } from '../service/materials.ts';
import { backup, verifyRegistry } from '../service/registry-admin.ts';
import { readSettings, resetSetting, writeSettingText } from '../service/settings.ts';
import { loadVersion, withExistingRegistry } from '../service/table-source.ts';
import { createToken, listTokens, revokeToken } from '../service/tokens.ts';
import { showVersion } from '../service/versions.ts';
import { registryPath } from '../registry/open.ts';
import { actorFrom, withRegistry } from './admin-options.ts';
import { cliOptionName } from './import-options.ts';

export function fileRegistry(opts: { db?: string; as?: string }): RegistryOperations {
  const use = <T>(fn: (r: Registry) => T | Promise<T>, open: OpenOptions = {}) => withRegistry(opts, fn, open);
  const creating: OpenOptions = { create: 'if-folder-exists' };
  const actor = () => actorFrom(opts);
  return {
    where: registryPath(opts.db),
    materials: (search) => use((r) => (search === undefined ? listMaterials(r) : searchMaterials(r, search))),
    history: (slug) => use((r) => history(r, slug)),
    version: (ref) => use((r) => showVersion(r, ref)),
    // As before server mode: a missing registry is "no file X, and no registry to look it up in".
    loadVersion: async (ref) => withExistingRegistry(ref, opts.db, (r) => loadVersion(r, ref)),
    diff: (a, b) => use((r) => diffVersions(r, a, b)),
    exportVersion: (ref, format, o) => use((r) => exportVersion(r, ref, format, o)),
    createMaterial: (input) => use((r) => createMaterial(r, input, actor()), creating),
    editMaterial: (slug, edit) => use((r) => editMaterial(r, slug, edit, actor())),
    importMeasurements: (request) => {
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
    approve: (ref) => use((r) => approve(r, ref, actor())),
    retire: (ref, reason) => use((r) => retire(r, ref, reason, actor())),
    withdraw: (ref, reason) => use((r) => withdraw(r, ref, actor(), reason)),
    lockAdd: (lock, ref) => use((r) => lockAdd(r, lock, ref)),
    lockVerify: (lock, o) => use((r) => lockVerify(r, lock, o)),
    lockOutdated: (lock) => use((r) => lockOutdated(r, lock)),
    // Read-only first, so a damaged file is only read (its integrity check reports the damage) and nothing is
    // migrated; a registry from an older nkledger is opened writable to bring its schema up to date first.
    verify: async () => {
      try {
        return await use(verifyRegistry, { readonly: true });
      } catch (err) {
        if (!(err instanceof EnvironmentError && err.rule === 'registry-needs-upgrade')) throw err;
        return use(verifyRegistry);
      }
    },
    backup: (file) => use((r) => backup(r, file)),
    createToken: (input) => use((r) => createToken(r, { ...input, createdBy: actor() })),
    listTokens: (o) => use((r) => listTokens(r, o)),
    revokeToken: (id) => use((r) => revokeToken(r, id, actor())),
    settings: () => use(readSettings),
    setSetting: (key, text) => use((r) => writeSettingText(r, key, text, actor())),
    resetSetting: (key) => use((r) => resetSetting(r, key, actor())),
  };
}
