/**
 * What a reviewer sees (src/service/review.ts) and the approval rule built on it (lifecycle.ts `approve`): the
 * summary is read from the stored record; a KK-inconsistent or unconverged version is refused without a reason,
 * and the reason given is part of the hashed audit event (the chain still verifies, and editing the reason breaks it).
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { eventHash, readAuditRows } from '../../src/registry/chain.ts';
import {
  approve,
  createMaterial,
  importVersion,
  reviewQueue,
  reviewVersion,
  STRONG_CORRELATION,
  verifyRegistry,
  writeSetting,
  type StoredFitReport,
  type StoredKkReport,
} from '../../src/service/registry.ts';
import { InputError } from '../../src/errors.ts';
import { statusOf } from '../../src/http-status.ts';
import { BACKENDS, cauchyTable, tempRegistry, type TempRegistry } from './helpers.ts';

describe.each(BACKENDS)('review on %s', (backend) => {
  let t: TempRegistry;
  beforeEach(async () => {
    t = await tempRegistry(backend);
    await createMaterial(t.registry, { slug: 'film', name: 'Film' }, 'ada');
  });
  afterEach(() => t.cleanup());

  /** A stored KK report as the check writes it (only the members the review reads); invented numbers. */
  function kk(verdict: string): StoredKkReport {
    return {
      verdict,
      summary: `verdict ${verdict}`,
      tolerance: 0.005,
      rms_dn: 0.002,
      max_dn: 0.009,
      systematic_max_dn: 0.007,
      worst_nm: 750,
    } as StoredKkReport;
  }

  /** A stored fit report with a 3×3 correlation matrix; `converged: false` adds the fitter's not-converged diagnostic. */
  function fit(converged: boolean, r12 = 0.2): StoredFitReport {
    const diagnostics = [
      { rule: 'at-bound', message: 'C ended on its lower bound', advice: 'widen its bounds', option: 'bounds', parameters: ['C'], value: 0 },
    ];
    if (!converged)
      diagnostics.push({
        rule: 'not-converged',
        message: 'the fit stopped after 200 iterations',
        advice: 'start elsewhere',
        option: 'starts',
        parameters: [],
        value: 0,
      });
    return {
      model: 'cauchy',
      parameters: {
        A: { value: 1.45, stderr: 0.001, unit: '1' },
        B: { value: 0.0036, stderr: 1e-4, unit: 'µm²' },
        C: { value: 0, stderr: null, unit: 'µm⁴' },
      },
      range_nm: [400, 800],
      statistics: { points: 18, rms_n: 1e-4, rms_k: 0, reduced_chi2: null, aic: -10, bic: -8, iterations: converged ? 6 : 200 },
      correlations: {
        threshold: 0.95,
        parameters: ['A', 'B', 'C'],
        matrix: [
          [1, r12, -0.97],
          [r12, 1, 0.1],
          [-0.97, 0.1, 1],
        ],
        high: [],
      },
      warnings: diagnostics.map((d) => d.message),
      diagnostics,
    } as StoredFitReport;
  }

  async function store(options: { kk?: string | null; converged?: boolean | null; a?: number; by?: string }): Promise<string> {
    return (
      await importVersion(
        t.registry,
        {
          slug: 'film',
          table: cauchyTable(options.a ?? 1.45),
          kk: options.kk === null ? null : kk(options.kk ?? 'consistent'),
          fit: options.converged === null ? null : fit(options.converged ?? true, STRONG_CORRELATION),
          provenance: { sample: 'MW-1', instrument: 'bench ellipsometer', operator: 'ada', source_file: 'run-1.csv', source_sha256: 'ab'.repeat(32) },
        },
        options.by ?? 'ada',
      )
    ).ref;
  }

  describe('reviewVersion', () => {
    it('reads the KK verdict and misfit, convergence, diagnostics as data, strong correlations and provenance', async () => {
      const ref = await store({ kk: 'consistent' });
      const review = await reviewVersion(t.registry, ref);
      expect(review).toMatchObject({
        ref: 'film@1',
        status: 'draft',
        kk: { verdict: 'consistent', misfit: { rms_dn: 0.002, max_dn: 0.009, tolerance: 0.005, worst_nm: 750 } },
        fit: { model: 'cauchy', converged: true, iterations: 6 },
        provenance: { sample: 'MW-1', instrument: 'bench ellipsometer', operator: 'ada', source_file: 'run-1.csv', created_by: 'ada' },
        blocking: [],
      });
      expect(review.fit?.diagnostics[0]).toMatchObject({ rule: 'at-bound', parameters: ['C'], value: 0, advice: 'widen its bounds' });
      // |r| ≥ the threshold, the threshold itself included (A/B sits exactly on it), either sign
      expect(review.correlations).toEqual({
        threshold: 0.95,
        pairs: [
          { a: 'A', b: 'B', r: 0.95 },
          { a: 'A', b: 'C', r: -0.97 },
        ],
      });
    });

    it('says "not-run" without a KK report and gives no fit for a table-only version', async () => {
      const review = await reviewVersion(t.registry, await store({ kk: null, converged: null }));
      expect(review.kk).toEqual({ verdict: 'not-run', summary: null, misfit: null });
      expect(review.fit).toBeNull();
      expect(review.correlations.pairs).toEqual([]);
      expect(review.blocking).toEqual([]);
    });

    it('lists an inconsistent KK check and an unconverged fit as blocking, each with rule, field and value', async () => {
      const review = await reviewVersion(t.registry, await store({ kk: 'inconsistent', converged: false }));
      expect(review.fit?.converged).toBe(false);
      expect(review.blocking.map(({ rule, field, value }) => ({ rule, field, value }))).toEqual([
        { rule: 'kk-inconsistent', field: 'content.kk.verdict', value: 'inconsistent' },
        { rule: 'fit-not-converged', field: 'content.fit.diagnostics', value: 'not-converged' },
      ]);
    });

    it('finds non-convergence in a fit report stored before diagnostics existed (sentences only)', async () => {
      const old = fit(false) as StoredFitReport & { diagnostics?: unknown };
      delete old.diagnostics;
      (old as unknown as { warnings: string[] }).warnings = [
        'the fit stopped after 200 iterations without meeting the convergence tests; the result may not be a minimum',
      ];
      const { ref } = await importVersion(t.registry, { slug: 'film', table: cauchyTable(), fit: old }, 'ada');
      expect((await reviewVersion(t.registry, ref)).blocking.map((b) => b.rule)).toEqual(['fit-not-converged']);
    });
  });

  /** The rule of the InputError `fn` throws. */
  async function ruleOf(fn: () => Promise<unknown>): Promise<string | undefined> {
    try {
      await fn();
    } catch (err) {
      return (err as InputError).rule;
    }
    return undefined;
  }

  describe('approve with blocking findings', () => {
    const auditCount = async () => (await readAuditRows(t.registry)).length;

    it('refuses without a reason: 409, rule, field, value, the review attached, nothing written', async () => {
      const ref = await store({ kk: 'inconsistent' });
      const before = await auditCount();
      let err: InputError | undefined;
      try {
        await approve(t.registry, ref, 'bob');
      } catch (e) {
        err = e as InputError;
      }
      expect(err).toBeInstanceOf(InputError);
      expect(err).toMatchObject({
        rule: 'approval-warnings-unaccepted',
        option: 'accept_warnings',
        value: 'inconsistent',
        location: { field: 'content.kk.verdict' },
      });
      expect(statusOf(err!)).toBe(409); // the API's answer (src/http-status.ts): RFC 9110 §15.5.10 Conflict
      expect(err?.remedies).toEqual([{ option: 'accept_warnings', value: 'REASON' }]);
      expect((err?.extensions.review as { ref: string }).ref).toBe('film@1');
      expect(err?.describe()).toMatch(
        /film@1 was not approved: the Kramers-Kronig check found n and k inconsistent.*--accept-warnings REASON \[approval-warnings-unaccepted\]/,
      );
      expect(await auditCount()).toBe(before);
      expect((await reviewVersion(t.registry, ref)).status).toBe('draft');
      // a blank reason is no reason
      expect(await ruleOf(() => approve(t.registry, ref, 'bob', { acceptWarnings: '  ' }))).toBe('reason-required');
    });

    it('the two-person rule is checked before the findings', async () => {
      const ref = await store({ kk: 'inconsistent' });
      expect(await ruleOf(() => approve(t.registry, ref, 'ada', { acceptWarnings: 'known artefact' }))).toBe('two-person-rule');
    });

    it('approves with a reason, records it in the hashed audit event, and the chain still verifies', async () => {
      const ref = await store({ kk: 'inconsistent', converged: false });
      const result = await approve(t.registry, ref, 'bob', { acceptWarnings: '  bump at 750 nm is the known interface artefact ' });
      expect(result).toMatchObject({
        ref,
        status: 'approved',
        approved_by: 'bob',
        accepted_warnings: { reason: 'bump at 750 nm is the known interface artefact', findings: ['kk-inconsistent', 'fit-not-converged'] },
      });
      expect(result.review.blocking).toHaveLength(2);
      const event = (await readAuditRows(t.registry)).at(-1)!;
      expect(event.action).toBe('version.approve');
      expect(JSON.parse(event.detail).accepted_warnings).toEqual(result.accepted_warnings);
      expect((await verifyRegistry(t.registry)).ok).toBe(true);
      // the reason is part of what the event's hash covers: another reason, another hash
      const edited = { ...event, detail: event.detail.replace('known interface', 'harmless') };
      expect(eventHash(edited)).not.toBe(event.hash);
      expect(eventHash(event)).toBe(event.hash);
    });

    it('approves a version with nothing blocking without a reason, and records none', async () => {
      const ref = await store({ kk: 'uninformative' });
      const result = await approve(t.registry, ref, 'bob');
      expect(result.accepted_warnings).toBeNull();
      expect(JSON.parse((await readAuditRows(t.registry)).at(-1)!.detail)).not.toHaveProperty('accepted_warnings');
    });
  });

  describe('reviewQueue', () => {
    it('lists the drafts a user may approve: not their own, only drafts, oldest first', async () => {
      const a = await store({ kk: 'consistent', by: 'ada' });
      const b = await store({ kk: 'inconsistent', a: 1.5, by: 'bob' });
      const c = await store({ kk: 'consistent', a: 1.6, by: 'cy' });
      await approve(t.registry, c, 'ada');
      const forBob = await reviewQueue(t.registry, { user: 'Bob', role: null });
      expect(forBob).toMatchObject({ user: 'Bob', may_approve: true, own_drafts: 1 });
      expect(forBob.drafts.map((d) => [d.ref, d.self, d.kk.verdict])).toEqual([[a, false, 'consistent']]);
      expect((await reviewQueue(t.registry, { user: 'cy', role: 'approver' })).drafts.map((d) => d.ref)).toEqual([a, b]);
    });

    it('is empty, saying why, for a role that cannot approve', async () => {
      await store({});
      expect(await reviewQueue(t.registry, { user: 'eve', role: 'editor' })).toEqual({
        user: 'eve',
        may_approve: false,
        reason: 'role editor cannot approve; approval needs role approver or admin',
        own_drafts: 0,
        drafts: [],
      });
      expect((await reviewQueue(t.registry, { user: 'root', role: 'admin' })).drafts).toHaveLength(1);
    });

    it("includes the user's own drafts, marked, when self-approval is allowed", async () => {
      const ref = await store({ by: 'ada' });
      await writeSetting(t.registry, 'allow_self_approval', true, 'ada');
      expect((await reviewQueue(t.registry, { user: 'ada', role: null })).drafts.map((d) => [d.ref, d.self])).toEqual([[ref, true]]);
    });
  });
});
