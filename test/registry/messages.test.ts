/**
 * What a user reads when a reference finds nothing or a rule says no: the message says what exists, and the command
 * line adds what to do in its own commands (src/cli/failure.ts).
 */
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { approve, createMaterial, importVersion, readLockfile, resolveRef, retire, showVersion, withdraw } from '../../src/service/registry.ts';
import { CLI_WORDING } from '../../src/cli/failure.ts';
import { InputError } from '../../src/errors.ts';
import { BACKENDS, cauchyTable, tempRegistry, type TempRegistry } from './helpers.ts';

/** The refusal `attempt` ends with, as the command line words it. */
async function cliText(attempt: () => unknown): Promise<string> {
  try {
    await attempt();
  } catch (err) {
    if (err instanceof InputError) return err.describe(CLI_WORDING);
    throw err;
  }
  throw new Error('no refusal');
}

describe.each(BACKENDS)('messages on %s', (backend) => {
  let t: TempRegistry;
  beforeEach(async () => {
    t = await tempRegistry(backend);
    await createMaterial(t.registry, { slug: 'mgf2-evap', name: 'MgF2' }, 'ada');
  });
  afterEach(() => t.cleanup());

  describe('not-found and rule messages', () => {
    it('a material without versions says so instead of "versions 1 to 0 exist"', async () => {
      await expect(showVersion(t.registry, 'mgf2-evap@1')).rejects.toThrow(
        'mgf2-evap has no version 1: it has no versions yet (importing a measurement adds one)',
      );
      await expect(resolveRef(t.registry, 'mgf2-evap')).rejects.toThrow('mgf2-evap has no approved version: it has no versions yet');
    });

    it('names the versions that exist', async () => {
      await importVersion(t.registry, { slug: 'mgf2-evap', table: cauchyTable() }, 'ada');
      await expect(showVersion(t.registry, 'mgf2-evap@2')).rejects.toThrow('mgf2-evap has no version 2: only version 1 exists');
      await importVersion(t.registry, { slug: 'mgf2-evap', table: cauchyTable(1.38) }, 'ada');
      await expect(showVersion(t.registry, 'mgf2-evap@7')).rejects.toThrow('mgf2-evap has no version 7: versions 1 to 2 exist');
    });

    it('a bare slug with only a draft says the draft waits for approval and how to pin it', async () => {
      await importVersion(t.registry, { slug: 'mgf2-evap', table: cauchyTable() }, 'ada');
      await expect(resolveRef(t.registry, 'mgf2-evap')).rejects.toThrow(
        'mgf2-evap has no approved version (its newest is mgf2-evap@1, draft, waiting for approval by someone other than its creator); ' +
          'a bare slug means the latest approved version, so name one explicitly, e.g. mgf2-evap@1',
      );
      await approve(t.registry, 'mgf2-evap@1', 'bob');
      await retire(t.registry, 'mgf2-evap@1', 'wrong substrate', 'bob');
      await expect(resolveRef(t.registry, 'mgf2-evap')).rejects.toThrow(/its newest is mgf2-evap@1, retired\); a bare slug means/);
    });

    it('status conflicts read as English ("an approved version")', async () => {
      await importVersion(t.registry, { slug: 'mgf2-evap', table: cauchyTable() }, 'ada');
      await expect(retire(t.registry, 'mgf2-evap@1', 'why', 'bob')).rejects.toThrow(
        'cannot retire mgf2-evap@1: it is draft, and only an approved version can be retired',
      );
      await approve(t.registry, 'mgf2-evap@1', 'bob');
      await expect(withdraw(t.registry, 'mgf2-evap@1', 'bob')).rejects.toThrow(
        'cannot withdraw mgf2-evap@1: it is approved, and only a draft version can be withdrawn',
      );
    });

    it('an unknown material says how to list and create materials', async () => {
      await expect(resolveRef(t.registry, 'tio2@1')).rejects.toThrow(/^no material "tio2" in the registry$/);
      expect(await cliText(() => resolveRef(t.registry, 'tio2@1'))).toBe(
        'no material "tio2" in the registry (`nkledger list` lists them; `nkledger material add tio2 --name NAME` creates it) [material-unknown]',
      );
    });

    it('a missing lockfile says how to start one', async () => {
      const path = join(t.dir, 'design.nklock.json');
      expect(() => readLockfile(path)).toThrow(`no lockfile ${path}`);
      expect(await cliText(() => readLockfile(path))).toBe(
        `${path}: no lockfile ${path} (start one with \`nkledger lock add REF --lock ${path}\`) [lock-missing]`,
      );
    });
  });
});
