/**
 * A version's content is served only after its SHA-256 is recomputed (verifiedContentOf). The stored text is
 * the content's canonical JSON, so the hash is taken over it as stored; content rewritten outside nkledger
 * is refused, and content stored as other but equivalent JSON text is still recognised by re-serializing it.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { IntegrityError } from '../../src/errors.ts';
import { canonicalJson } from '../../src/registry/canonical.ts';
import { contentOf, findMaterial, findVersion, verifiedContentOf } from '../../src/registry/records.ts';
import { BACKENDS, dropTrigger, rawSql, tempRegistryWithDraft, type TempRegistry } from './helpers.ts';

describe.each(BACKENDS)('verified content on %s', (backend) => {
  let t: TempRegistry;
  beforeEach(async () => {
    t = await tempRegistryWithDraft(backend);
  });
  afterEach(() => t.cleanup());

  const row = async () => await findVersion(t.registry, await findMaterial(t.registry, 'film'), 1);

  /** Rewrite the stored content text, as someone with sqlite3 could after dropping the immutability trigger. */
  async function rewrite(text: string): Promise<void> {
    await dropTrigger(t.registry, 'material_versions_content_immutable');
    await rawSql(t.registry, 'UPDATE material_versions SET content = ? WHERE number = 1', [text]);
  }

  describe('verified content', () => {
    it('is stored as its canonical JSON and served as it was stored', async () => {
      const stored = await row();
      expect(stored.content).toBe(canonicalJson(contentOf(stored)));
      expect(verifiedContentOf(stored, 'film@1')).toEqual(contentOf(stored));
    });

    it('rewritten with the same meaning in other JSON text: still recognised', async () => {
      const content = contentOf(await row());
      await rewrite(JSON.stringify(content, null, 2));
      expect(verifiedContentOf(await row(), 'film@1')).toEqual(content);
    });

    it('changed outside nkledger: refused', async () => {
      const content = contentOf(await row());
      content.table!.n[0] += 1e-6;
      await rewrite(canonicalJson(content));
      const changed = await row();
      expect(() => verifiedContentOf(changed, 'film@1')).toThrow(IntegrityError);
    });
  });
});
