/**
 * Fits and Kramers-Kronig checks run on the compute pool's worker threads, not on the event loop:
 * while a long check runs, n,k reads are answered; with every thread busy and the queue full, a further
 * heavy request is refused at once with 503, Retry-After and a problem document; a check whose client
 * disconnects is stopped and its thread freed.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ComputePool, TaskAbandonedError } from '../../src/service/compute-pool.ts';
import { approvedGlass, csv, csvTable, startHarness, type ApiHarness } from './harness.ts';

/** An invented smooth table with `rows` rows (Cauchy n, a weak absorption tail), long enough to keep a thread busy. */
function longTable(rows: number): string {
  const lines = ['wavelength_nm,n,k'];
  for (let i = 0; i < rows; i++) {
    const wl = 300 + (700 * i) / (rows - 1);
    lines.push(`${wl.toFixed(4)},${(1.6 + 0.01 / (wl / 1000) ** 2).toFixed(6)},${(0.003 * (300 / wl) ** 4).toFixed(6)}`);
  }
  return `${lines.join('\n')}\n`;
}

/** Wait until `done()` holds, checking every 20 ms, for at most `ms`. */
async function until(done: () => boolean, ms: number): Promise<boolean> {
  for (const end = Date.now() + ms; !done() && Date.now() < end; ) await new Promise((r) => setTimeout(r, 20));
  return done();
}

const LONG = longTable(60_000);
let h: ApiHarness;
let pool: ComputePool;
beforeAll(async () => {
  pool = new ComputePool({ threads: 1, maxQueue: 0 });
  h = await startHarness({ compute: pool, settings: { max_body_bytes: 64 * 1024 * 1024 } });
  await approvedGlass(h);
});
afterAll(() => h.stop());

describe('compute pool', { timeout: 300_000 }, () => {
  it('keeps answering reads during a long KK check; refuses more heavy work with 503 + Retry-After when full; stops the check when its client disconnects', async () => {
    // Start the threads first (loading the sources takes a moment).
    expect((await h.request('/api/v1/fit?model=cauchy', { ...csv(csvTable()), as: 'reader' })).status).toBe(200);
    let longDone = false;
    let long: Promise<Response | null> | undefined;
    let client: AbortController | undefined;
    let busy: Response | undefined;
    // A small request may still hold the thread when the long one arrives (then the long one is the
    // one refused): start again, a few times at most.
    for (let attempt = 0; attempt < 5 && !busy; attempt++) {
      longDone = false;
      client = new AbortController();
      long = h
        .request('/api/v1/kk', { ...csv(LONG), as: 'reader', signal: client.signal })
        .then((res) => {
          longDone = true;
          return res;
        })
        .catch((err: Error) => {
          if (err.name !== 'AbortError') throw err;
          return null; // the client hung up
        });
      // Once the long check holds the only thread (queue 0), the next heavy request is refused at once.
      for (let i = 0; i < 200 && !longDone; i++) {
        const res = await h.request('/api/v1/fit?model=cauchy', { ...csv(csvTable()), as: 'reader' });
        if (res.status === 503) {
          busy = res;
          break;
        }
        await res.arrayBuffer();
        await new Promise((r) => setTimeout(r, 20));
      }
      if (!busy) await (await long)?.arrayBuffer();
    }
    expect(busy, 'a heavy request while the only compute thread is busy').toBeDefined();
    expect(busy!.headers.get('retry-after')).toMatch(/^\d+$/);
    expect(busy!.headers.get('content-type')).toBe('application/problem+json');
    expect(await busy!.json()).toMatchObject({ status: 503, rule: 'server-busy' });
    // Reads are answered while the check still runs.
    for (let i = 0; i < 10; i++) {
      const read = await h.request('/api/v1/materials/glass/versions/1/nk?wavelengths_nm=500,600');
      expect(read.status).toBe(200);
      await read.arrayBuffer();
    }
    expect(longDone, 'reads answered before the long check ended').toBe(false);

    // The client hangs up: the server stops the check (its thread is ended) instead of finishing it for nobody.
    const before = pool.abandoned;
    client!.abort();
    expect(await long).toBeNull();
    expect(await until(() => pool.abandoned === before + 1 && pool.pending === 0, 30_000), 'the check stopped when its client left').toBe(true);
    expect(longDone).toBe(false);
    // The thread is free again (a fresh one replaces the ended thread).
    expect((await h.request('/api/v1/fit?model=cauchy', { ...csv(csvTable()), as: 'reader' })).status).toBe(200);
  });

  it('a task whose signal aborts leaves the queue, or its running thread is ended, with TaskAbandonedError', async () => {
    const own = new ComputePool({ threads: 1, maxQueue: 1 });
    try {
      const bytes = new TextEncoder().encode(LONG);
      const running = new AbortController();
      const waiting = new AbortController();
      const first = own.run({ kind: 'kk', bytes, importOptions: {}, kk: {} }, running.signal);
      const second = own.run({ kind: 'kk', bytes, importOptions: {}, kk: {} }, waiting.signal);
      expect(own.pending).toBe(2);
      waiting.abort();
      await expect(second).rejects.toBeInstanceOf(TaskAbandonedError);
      running.abort();
      await expect(first).rejects.toBeInstanceOf(TaskAbandonedError);
      expect(own.abandoned).toBe(2);
      expect(own.pending).toBe(0);
      // An already aborted signal never starts the task.
      await expect(own.run({ kind: 'kk', bytes, importOptions: {}, kk: {} }, AbortSignal.abort())).rejects.toBeInstanceOf(TaskAbandonedError);
      expect(own.abandoned).toBe(3);
    } finally {
      await own.close();
    }
  });
});
