/**
 * A bounded in-memory cache of rendered answers about immutable versions (approved or retired). The
 * content of slug@N never changes, so an answer computed once stays right as long as the version's
 * status is the same; each hit is checked against the current status (a retirement changes the
 * answer's warnings and headers). Least recently used entries go first.
 */
import type { VersionStatus } from '../registry/types.ts';

export interface CachedRepresentation {
  /** The version's status when the answer was rendered. */
  status: VersionStatus;
  /** Every response header of the answer (content type, ETag, caching, Vary, Deprecation). */
  headers: Record<string, string>;
  body: string;
}

export class RepresentationCache {
  private readonly entries = new Map<string, CachedRepresentation>();
  private bytes = 0;

  constructor(
    private readonly maxEntries = 4096,
    private readonly maxBytes = 32 * 1024 * 1024,
  ) {}

  /** The entry for `key` if it was rendered while the version had this status. */
  get(key: string, status: VersionStatus): CachedRepresentation | undefined {
    const entry = this.entries.get(key);
    if (!entry || entry.status !== status) return undefined;
    // Re-insert: a Map iterates in insertion order, so the first key is the least recently used.
    this.entries.delete(key);
    this.entries.set(key, entry);
    return entry;
  }

  set(key: string, entry: CachedRepresentation): void {
    if (entry.body.length > this.maxBytes / 16) return; // one huge answer must not flush the rest
    this.delete(key);
    this.entries.set(key, entry);
    this.bytes += entry.body.length;
    while (this.entries.size > this.maxEntries || this.bytes > this.maxBytes) {
      this.delete(this.entries.keys().next().value as string);
    }
  }

  get size(): number {
    return this.entries.size;
  }

  private delete(key: string): void {
    const old = this.entries.get(key);
    if (!old) return;
    this.bytes -= old.body.length;
    this.entries.delete(key);
  }
}
