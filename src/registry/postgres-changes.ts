/**
 * Knowing whether the PostgreSQL registry may have changed, for the server's memo of small answers
 * (src/api/registry-changes.ts): the twin of `changeCounters` in hot-reads.ts, with the same two counters.
 *
 * - `own()`: write transactions of this process committed through the handle (pgWriteTransaction counts them
 *   after their COMMIT). A plain number: free to read on every request.
 * - `other()`: notices received on a dedicated connection that LISTENs on the channel `nkledger_changes`. The
 *   triggers of drizzle-pg/0002_change_notify.sql send one (payload: the table's name) from every transaction that
 *   writes materials, material_versions, api_tokens or registry_settings — the tables the memo's answers come
 *   from (a version's status, who a token stands for, the settings) — whoever wrote it: another server, a CLI
 *   writer, this process (its own commits thus count twice, which only clears the memo once more). Also a plain
 *   number, counted as notices arrive.
 *
 * When a change shows. PostgreSQL sends the notice at the writer's COMMIT, to every listening session, and it
 * reaches this process asynchronously: node-postgres reads it from the listening socket in some later turn of the
 * event loop, and `other()` moves then. A server therefore sees another server's change from the first turn after
 * the notice arrived — on loopback or a LAN well under a millisecond after the commit, normally before the
 * writer's own client has its answer — but with no guarantee against a request that is already being read in the
 * same turn. What must hold exactly on the very next request, whoever changed it, must not rest on the memo: on
 * PostgreSQL the bearer token is looked up in the database on every request (hot-reads-pg.ts `pgActiveToken`, one
 * indexed read), so a token revoked through one server is refused by every other one on its next request. The
 * memo still serves version statuses and the settings, where a change showing some microseconds late is what
 * SQLite's once-per-turn `PRAGMA data_version` check allows too.
 *
 * A lost listening connection (server restart, pg_terminate_backend, network) is opened again, after a pause
 * that grows from 50 ms to 2 s. Notices sent meanwhile are lost, so while it is not listening every call of
 * `other()` returns a new number (nothing remembered is trusted), and once it listens again the counter moves
 * once more (for what changed before the LISTEN took effect).
 */
import pg from 'pg';
import type { PgRegistry } from './postgres.ts';

/** The channel the change triggers notify on (drizzle-pg/0002_change_notify.sql). */
export const CHANGE_CHANNEL = 'nkledger_changes';

export interface PgChangeCounters {
  /** Commits of this process's write transactions on the handle. */
  own(): number;
  /** Notices of commits by anyone; a new number on every call while not listening. */
  other(): number;
  /** True while the listening connection is up and LISTENing. */
  listening(): boolean;
  /** Resolves once the connection listens (at once if it does). */
  whenListening(): Promise<void>;
  /** The server process id of the listening connection (pg_backend_pid()), null while not listening. */
  listenerPid(): number | null;
  /** Stop listening and reconnecting (also done when the handle closes). */
  close(): Promise<void>;
}

export interface PgChangeOptions {
  /** First pause before reconnecting, in ms (doubling up to `maxReconnectMs`). */
  minReconnectMs?: number;
  maxReconnectMs?: number;
}

/** Change counters for `handle`: starts listening at once (see the top of this file). */
export function pgChangeCounters(handle: PgRegistry, options: PgChangeOptions = {}): PgChangeCounters {
  const minPause = options.minReconnectMs ?? 50;
  const maxPause = options.maxReconnectMs ?? 2000;
  let notices = 0;
  let client: pg.Client | null = null;
  let pid: number | null = null;
  let closed = false;
  let pause = minPause;
  let timer: NodeJS.Timeout | null = null;
  let waiters: (() => void)[] = [];

  const reconnectLater = () => {
    if (closed || timer) return;
    timer = setTimeout(() => {
      timer = null;
      void connect();
    }, pause);
    timer.unref();
    pause = Math.min(maxPause, pause * 2);
  };

  const connect = async () => {
    if (closed) return;
    const c = new pg.Client({ ...handle.pool.options, application_name: `${handle.pool.options.application_name ?? 'nkledger'}-listen` });
    let gone = false;
    const lost = () => {
      if (gone) return; // 'error', 'end' and a failed connect may each report the same loss
      gone = true;
      if (client === c) {
        client = null;
        pid = null;
      }
      c.removeAllListeners('notification');
      c.end().catch(() => {});
      reconnectLater();
    };
    c.on('error', lost);
    c.on('end', lost);
    c.on('notification', (message) => {
      if (message.channel === CHANGE_CHANNEL) notices++;
    });
    try {
      await c.connect();
      await c.query(`LISTEN ${CHANGE_CHANNEL}`);
      const { rows } = await c.query<{ pid: number }>('SELECT pg_backend_pid() AS pid');
      if (closed) {
        await c.end();
        return;
      }
      client = c;
      pid = rows[0].pid;
      pause = minPause;
      // Anything committed before the LISTEN took effect sent no notice here.
      notices++;
      const ready = waiters;
      waiters = [];
      for (const resolve of ready) resolve();
    } catch {
      lost();
    }
  };

  void connect();
  const counters: PgChangeCounters = {
    own: () => handle.commits(),
    other: () => {
      if (!client) notices++;
      return notices;
    },
    listening: () => client !== null,
    whenListening: () => (client ? Promise.resolve() : new Promise((resolve) => waiters.push(resolve))),
    listenerPid: () => pid,
    close: async () => {
      closed = true;
      if (timer) clearTimeout(timer);
      timer = null;
      const c = client;
      client = null;
      pid = null;
      if (c) {
        c.removeAllListeners('end');
        await c.end().catch(() => {});
      }
    },
  };
  const off = handle.onClose(() => counters.close());
  const close = counters.close;
  counters.close = async () => {
    off();
    await close();
  };
  return counters;
}
