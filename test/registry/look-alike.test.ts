/**
 * Material slugs and display names that read like an existing material's but are other text are refused:
 * confusable letters within one script (0/O, 1/l, rn/m), letters of another script drawn alike (Cyrillic,
 * Greek), other Unicode normal forms and width variants (NFKC, Unicode TR 15), invisible characters. The
 * skeleton comparison is the idea of Unicode TR 39 §4 (Confusable Detection); identical names and names
 * differing only in case stay allowed, as before.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { statusOf } from '../../src/http-status.ts';
import { hiddenLookAlike, lookAlikeKey } from '../../src/service/look-alike.ts';
import { createMaterial, editMaterial, listMaterials } from '../../src/service/registry.ts';
import { runCli } from '../cli/run-cli.ts';
import { refusalAsync } from '../io/refusal.ts';
import { BACKENDS, tempRegistry, type TempRegistry } from './helpers.ts';

describe.each(BACKENDS)('look alike on %s', (backend) => {
  let t: TempRegistry;
  beforeEach(async () => {
    t = await tempRegistry(backend);
    await createMaterial(t.registry, { slug: 'sio2-thermal', name: 'SiO2 thermal oxide' }, 'ada');
    await createMaterial(t.registry, { slug: 'al2o3-ald', name: 'Al2O3 ALD' }, 'ada');
  });
  afterEach(() => t.cleanup());

  describe('look-alike material names', () => {
    it('the skeleton erases what a reader cannot see, and nothing a reader can', () => {
      expect(lookAlikeKey('SiO₂ thermal oxide')).toBe(lookAlikeKey('SiO2 thermal oxide')); // subscript digit, NFKC
      expect(lookAlikeKey('ＳｉＯ２ thermal oxide')).toBe(lookAlikeKey('SiO2 thermal oxide')); // full-width
      expect(lookAlikeKey('Si02 thermal oxide')).toBe(lookAlikeKey('SiO2 thermal oxide')); // zero for O
      expect(lookAlikeKey('AI2O3 ALD')).toBe(lookAlikeKey('Al2O3 ALD')); // capital I for l
      expect(lookAlikeKey('A12O3 ALD')).toBe(lookAlikeKey('Al2O3 ALD')); // one for l
      expect(lookAlikeKey('SiО2 thermal oxide')).toBe(lookAlikeKey('SiO2 thermal oxide')); // Cyrillic О
      expect(lookAlikeKey('SiΟ2 thermal oxide')).toBe(lookAlikeKey('SiO2 thermal oxide')); // Greek Ο
      expect(lookAlikeKey('ѕіо2 thermal oxide')).toBe(lookAlikeKey('sio2 thermal oxide')); // all-Cyrillic ѕ і о
      expect(lookAlikeKey('SiO2 therrnal oxide')).toBe(lookAlikeKey('SiO2 thermal oxide')); // rn for m
      expect(lookAlikeKey('SiO2\u200B thermal  oxide')).toBe(lookAlikeKey('SiO2 thermal oxide')); // zero-width space, two spaces
      expect(lookAlikeKey('Ce\u0301 film')).toBe(lookAlikeKey('C\u00e9 film')); // decomposed é, NFKC composes
      expect(lookAlikeKey('SiO2 – wet')).toBe(lookAlikeKey('SiO2 - wet')); // en dash for hyphen
      // Plain differences stay differences; Greek letters used as symbols keep their identity.
      expect(lookAlikeKey('SiO2 thermal oxide')).not.toBe(lookAlikeKey('SiO2 thermal oxides'));
      expect(lookAlikeKey('α-Si:H')).not.toBe(lookAlikeKey('a-Si:H'));
      expect(lookAlikeKey('μc-Si')).not.toBe(lookAlikeKey('uc-Si'));
      expect(lookAlikeKey('β-Ga2O3')).not.toBe(lookAlikeKey('B-Ga2O3'));
      expect(hiddenLookAlike('Glass', 'glass')).toBe(false); // case is plain to see
      expect(hiddenLookAlike('Glass', 'Glass')).toBe(false);
      expect(hiddenLookAlike('Glass', 'Glаss')).toBe(true); // Cyrillic а
    });

    it('a new material whose slug or name only looks like an existing one is refused (409, rule, field, value); plain ones pass', async () => {
      const slug = await refusalAsync(() => createMaterial(t.registry, { slug: 'si02-thermal', name: 'Another oxide' }, 'ada'));
      expect(slug).toMatchObject({ rule: 'material-look-alike', option: 'slug', value: 'si02-thermal' });
      expect(statusOf(slug)).toBe(409); // the API's answer (src/http-status.ts)
      expect(slug.message).toMatch(/existing material sio2-thermal/);
      for (const name of ['SiO₂ thermal oxide', 'ＳｉＯ２ thermal oxide', 'SiО2 thermal oxide', 'Si02 thermal oxide', 'SiO2 thermal\u200B oxide']) {
        const err = await refusalAsync(() => createMaterial(t.registry, { slug: 'other-oxide', name }, 'ada'));
        expect(err, name).toMatchObject({ rule: 'material-look-alike', option: 'name', value: name });
        expect(statusOf(err), name).toBe(409);
        expect(err.message).toMatch(/"SiO2 thermal oxide", the name of sio2-thermal/);
      }
      expect(await refusalAsync(() => createMaterial(t.registry, { slug: 'a12o3-ald', name: 'x' }, 'ada'))).toMatchObject({ option: 'slug' });
      // Nothing was written by the refusals; the same name, another case, and plainly other names are accepted.
      expect((await listMaterials(t.registry)).map((m) => m.slug)).toEqual(['al2o3-ald', 'sio2-thermal']);
      await createMaterial(t.registry, { slug: 'sio2-wet', name: 'SiO2 thermal oxide' }, 'ada');
      await createMaterial(t.registry, { slug: 'sio2-dry', name: 'sio2 THERMAL oxide' }, 'ada');
      await createMaterial(t.registry, { slug: 'sio2-pecvd', name: 'SiO2 PECVD oxide' }, 'ada');
      expect(await listMaterials(t.registry)).toHaveLength(5);
    });

    it('renaming to a look-alike of another material is refused; renaming a material to its own name in another form is not', async () => {
      expect(await refusalAsync(() => editMaterial(t.registry, 'al2o3-ald', { name: 'SiO₂ thermal oxide' }, 'ada'))).toMatchObject({
        rule: 'material-look-alike',
        option: 'name',
      });
      expect((await editMaterial(t.registry, 'sio2-thermal', { name: 'SiO₂ thermal oxide' }, 'ada')).name).toBe('SiO₂ thermal oxide');
    });

    it('the CLI names the existing material and the rule (exit 2)', async () => {
      const cli = await runCli(['material', 'add', 'si02-thermal', '--name', 'x', '--db', t.path], { env: { NKLEDGER_USER: 'ada' } });
      expect(cli.code).toBe(2);
      expect(cli.stderr).toMatch(/reads like that of the existing material sio2-thermal.*\[material-look-alike\]/);
    });
  });
});
