/**
 * Fits and Kramers-Kronig checks run on the compute pool's worker threads, not on the event loop:
 * while a long check runs, n,k reads are answered; with every thread busy and the queue full, a further
 * heavy request is refused at once with 503, Retry-After and a problem document.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
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

let h: ApiHarness;
beforeAll(async () => {
  h = await startHarness({ compute: { threads: 1, maxQueue: 0 }, settings: { max_body_bytes: 64 * 1024 * 1024 } });
  approvedGlass(h);
});
afterAll(() => h.stop());

describe('compute pool', { timeout: 300_000 }, () => {
  it('keeps answering reads during a long KK check; refuses more heavy work with 503 + Retry-After when full', async () => {
    // Start the threads first (loading the sources takes a moment).
    expect((await h.request('/api/v1/fit?model=cauchy', { ...csv(csvTable()), as: 'reader' })).status).toBe(200);
    const body = longTable(60_000);
    let longDone = false;
    let long: Promise<Response> | undefined;
    let busy: Response | undefined;
    // A small request may still hold the thread when the long one arrives (then the long one is the
    // one refused): start again, a few times at most.
    for (let attempt = 0; attempt < 5 && !busy; attempt++) {
      longDone = false;
      long = h.request('/api/v1/kk', { ...csv(body), as: 'reader' }).then((res) => {
        longDone = true;
        return res;
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
      if (!busy) await (await long).arrayBuffer();
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
    const answer = await long!;
    expect(answer.status).toBe(200);
    expect((await answer.json()).report.points).toBe(60_000);
    // The thread is free again.
    expect((await h.request('/api/v1/fit?model=cauchy', { ...csv(csvTable()), as: 'reader' })).status).toBe(200);
  });
});
