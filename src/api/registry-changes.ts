/**
 * Knowing cheaply whether the registry may have changed, so the server can remember small answers
 * (a version's status, who a token belongs to) between requests instead of asking SQLite each time.
 *
 * Why: under WAL every SQLite read transaction takes and drops a lock on the -shm file with fcntl
 * (two system calls, about 5 µs here), which was most of the server's cost per cached n,k request.
 * Commits are seen two ways:
 * - on this connection (API writes, or any write through the server's handle): `total_changes()`
 *   counts them and reads no page, so it needs no lock (about 0.1 µs); checked on every call;
 * - on any other connection (the CLI, another process): `PRAGMA data_version` changes after another
 *   connection commits (https://sqlite.org/pragma.html#pragma_data_version). It needs a read
 *   transaction, so it runs once per turn of the event loop, not per request: requests the server
 *   reads from the network in one turn share one check, and the next turn checks again.
 *   A commit by another process therefore shows from the next turn of the event loop on: when idle,
 *   at the next request; under load about 20 requests share a turn here, and a turn can last
 *   milliseconds (libuv reads more than 1024 ready sockets in one turn).
 * On PostgreSQL both counters are plain numbers (src/registry/postgres-changes.ts: commits through this
 * handle, and notices from a LISTEN connection), so both are read on every call.
 */
import { changeCounters } from '../registry/hot-reads.ts';
import type { Registry } from '../registry/open.ts';

export class RegistryChanges {
  private readonly counters: ReturnType<typeof changeCounters>;
  private own = -1;
  private other = -1;
  private otherCheckedThisTurn = false;
  /** Whether `other()` is cheap enough to read on every call (PostgreSQL's). */
  private readonly otherEveryCall: boolean;
  /** False on PostgreSQL: who a token stands for is asked of the database on every request (src/api/auth.ts). */
  readonly memoizeTokens: boolean;
  private stamp = 0;
  private readonly endTurn = () => {
    this.otherCheckedThisTurn = false;
  };

  constructor(registry: Registry) {
    this.counters = changeCounters(registry);
    this.otherEveryCall = registry.dialect === 'postgres';
    this.memoizeTokens = registry.dialect !== 'postgres';
  }

  /** A number that is different from every earlier one as soon as a change is seen (see above). */
  current(): number {
    const own = this.counters.own();
    let other = this.other;
    if (this.otherEveryCall) other = this.counters.other();
    else if (!this.otherCheckedThisTurn) {
      other = this.counters.other();
      this.otherCheckedThisTurn = true;
      setImmediate(this.endTurn);
    }
    if (own !== this.own || other !== this.other) {
      this.own = own;
      this.other = other;
      this.stamp++;
    }
    return this.stamp;
  }
}

/**
 * Values computed from the registry, kept until it changes. At most `maxEntries` are kept: when full
 * the memo starts afresh, so keys chosen by clients (unknown tokens, made-up slugs) cannot grow it.
 * A value whose computation saw the registry change meanwhile is returned but not kept; a failed one is not kept.
 */
export class ChangeMemo<V> {
  private readonly values = new Map<string, V>();
  private stamp = -1;

  constructor(
    private readonly changes: RegistryChanges,
    private readonly maxEntries = 1024,
  ) {}

  async get(key: string, compute: () => Promise<V>): Promise<V> {
    const stamp = this.changes.current();
    if (stamp !== this.stamp) {
      this.values.clear();
      this.stamp = stamp;
    }
    if (this.values.has(key)) return this.values.get(key) as V;
    const value = await compute();
    if (this.stamp !== stamp || this.changes.current() !== stamp) return value;
    if (this.values.size >= this.maxEntries) this.values.clear();
    this.values.set(key, value);
    return value;
  }

  get size(): number {
    return this.values.size;
  }
}
