/**
 * The two-person rule on normalised user names: a creator's name in capitals, full-width, with a letter
 * swapped for its Cyrillic look-alike, or with a zero-width space appended must not count as someone else.
 * Names are compared by NFKC + case folding (Unicode TR 15, and full case folding's ß → ss);
 * look-alike and invisible names are refused where tokens are made and wherever a name acts (TR 39).
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.ts';
import { approve, checkActor, createMaterial, importVersion, sameUser } from '../../src/service/registry.ts';
import { createToken } from '../../src/service/tokens.ts';
import { startHarness, type ApiHarness } from '../api/harness.ts';
import { BACKENDS, cauchyTable, tempRegistryWithDraft, type TempRegistry } from './helpers.ts';

describe.each(BACKENDS)('users on %s', (backend) => {
  let t: TempRegistry;
  beforeEach(async () => {
    t = await tempRegistryWithDraft(backend);
  });
  afterEach(() => t.cleanup());

  describe('user names', () => {
    it('are the same person in any case or compatibility form', () => {
      expect(sameUser('ada', 'ADA')).toBe(true);
      expect(sameUser('ada', 'ａｄａ')).toBe(true); // full-width forms, NFKC
      expect(sameUser('strauss', 'STRAUß')).toBe(true); // ß folds to ss
      expect(sameUser('ada', 'adam')).toBe(false);
      expect(checkActor('ａｄａ')).toBe('ada'); // stored in NFKC form
    });

    it('the creator cannot approve as ADA or ａｄａ', async () => {
      for (const alias of ['ADA', 'Ada', 'ａｄａ', ' ada ']) {
        await expect(approve(t.registry, 'film@1', alias), alias).rejects.toThrow(/cannot also approve it/);
      }
      expect((await approve(t.registry, 'film@1', 'bob')).approved_by).toBe('bob');
    });

    it('refuses look-alike and invisible names, for tokens and for any acting name', async () => {
      const cases: [string, RegExp][] = [
        ['\u0430da', /mixes letters of the Cyrillic and Latin scripts/], // Cyrillic а + Latin da
        ['ada\u200b', /invisible or control character U\+200B/], // zero-width space
        ['a\u200dda', /U\+200D/], // zero-width joiner
        ['ada\u202e', /U\+202E/], // right-to-left override
        ['ad\u0007a', /U\+0007/],
      ];
      for (const [name, why] of cases) {
        await expect(createToken(t.registry, { user: name, role: 'approver', createdBy: 'root' }), JSON.stringify(name)).rejects.toThrow(why);
        await expect(approve(t.registry, 'film@1', name), JSON.stringify(name)).rejects.toThrow(InputError);
      }
      // Single-script names of any script, and the conventional Japanese mix, are fine.
      for (const name of ['Ада Лавлейс', 'Ada Lovelace', 'Ἀθηνᾶ', '山田 たろう', 'Jean-Luc O\u2019Neil'])
        expect(() => checkActor(name), name).not.toThrow();
    });
  });

  describe('over HTTP', () => {
    let h: ApiHarness;
    beforeEach(async () => {
      h = await startHarness();
    });
    afterEach(() => h.stop());

    it("an approver token made for the creator's name in capitals cannot approve the creator's draft; look-alike tokens cannot be made", async () => {
      await createMaterial(h.registry, { slug: 'sin', name: 'SiN' }, 'lab-editor');
      await importVersion(h.registry, { slug: 'sin', table: cauchyTable(1.9) }, 'lab-editor');
      const upper = (await createToken(h.registry, { user: 'LAB-EDITOR', role: 'approver', createdBy: 'root' })).token;
      const res = await h.request('/api/v1/materials/sin/versions/1/approve', { method: 'POST', token: upper });
      expect(res.status).toBe(409);
      expect((await res.json()).rule).toBe('two-person-rule');
      for (const user of ['lab-\u0435ditor', 'lab-editor\u200b']) {
        const made = await h.request('/api/v1/tokens', {
          method: 'POST',
          headers: { 'content-type': 'application/json' },
          body: JSON.stringify({ user, role: 'approver' }),
          as: 'admin',
        });
        expect(made.status, JSON.stringify(user)).toBe(400);
        expect((await made.json()).rule).toBe('actor-invalid');
      }
    });
  });
});
