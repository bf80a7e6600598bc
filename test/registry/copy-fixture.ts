/** A registry with every kind of row a copy carries, shared by the copy tests of both backends. */
import { createMaterial, importVersion, openRegistry, type Registry, approve, retire, withdraw } from '../../src/service/registry.ts';
import { writeSetting } from '../../src/service/settings.ts';
import { createToken, revokeToken } from '../../src/service/tokens.ts';
import { startSession } from '../../src/service/web-sessions.ts';
import { cauchyTable, registryFileBeforeTheChain } from './helpers.ts';

/** Every version the fixture holds. */
export const REFS = ['film@1', 'film@2', 'film@3', 'film@4', 'oxide@1'];

/** A registry with every kind of row: approved, retired, withdrawn and draft versions, provenance, settings, tokens, a web session. */
export async function fillForCopy(path: string): Promise<void> {
  const r = await openRegistry(path);
  try {
    await createMaterial(r, { slug: 'film', name: 'Film', description: 'PECVD film of the Marrowick line', tags: ['nitride'] }, 'ada');
    await createMaterial(r, { slug: 'oxide', name: 'Oxide' }, 'ada');
    const provenance = { sample: 'MO-2291', method: 'spectroscopic-ellipsometry', angles_deg: [55, 65, 75], notes: 'ünïcödé notes ✓' };
    await importVersion(r, { slug: 'film', table: cauchyTable(1.45), provenance }, 'ada');
    await importVersion(r, { slug: 'film', table: cauchyTable(1.46) }, 'ada');
    await importVersion(r, { slug: 'film', table: cauchyTable(1.47) }, 'ada');
    await importVersion(r, { slug: 'film', table: cauchyTable(1.48) }, 'ada');
    await importVersion(r, { slug: 'oxide', table: cauchyTable(1.9, 0.01, 0.001) }, 'cem');
    await approve(r, 'film@1', 'bob');
    await approve(r, 'film@2', 'bob');
    await retire(r, 'film@1', 'substrate model was wrong', 'bob');
    await withdraw(r, 'film@3', 'ada', 'wrong sample');
    await writeSetting(r, 'allow_self_approval', true, 'admin');
    const token = await createToken(r, { user: 'ada', role: 'editor', createdBy: 'admin' });
    const other = await createToken(r, { user: 'bob', role: 'approver', createdBy: 'admin' });
    await revokeToken(r, other.id, 'admin');
    await startSession(r, token.token);
  } finally {
    await r.close();
  }
}

export async function withOpen<T>(path: string, use: (r: Registry) => Promise<T>): Promise<T> {
  const r = await openRegistry(path, { create: 'never' });
  try {
    return await use(r);
  } finally {
    await r.close();
  }
}

/**
 * A registry made by an nkledger from before the audit chain (schema of migration 0005) with one approved version
 * and two audit rows without hashes, then opened once by this nkledger: migrated, its chain started by a genesis
 * that covers those rows by a digest. Returns its path (`dir/old.db`).
 */
export async function registryFromBeforeTheChain(dir: string): Promise<string> {
  const old = registryFileBeforeTheChain(dir, [
    ['ada', 'material.create', null],
    ['bob', 'version.approve', 1],
  ]);
  await withOpen(old, async () => {}); // brings the schema up to date and starts the chain
  return old;
}
