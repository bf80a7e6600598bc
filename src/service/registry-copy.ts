/**
 * `nkledger registry copy FROM TO`: a whole registry copied into a new, empty one, of either backend, with every
 * hash re-verified on both sides. The rows move through src/registry/copy.ts; this file opens both registries
 * and wraps the copy in checks:
 *
 *  - the source is verified (`verifyRegistry`: every version's SHA-256 from its content and provenance, the
 *    audit chain link by link, versions against the chain, the triggers) in the same read transaction the rows
 *    are read in, so what is copied is what was verified; a source that fails is refused before the
 *    destination is opened (CopyCheckError, the CLI's exit 3);
 *  - the destination must be empty (ConflictError copy-destination-not-empty) and is written in ONE transaction;
 *  - inside that transaction, before the commit, the destination is verified the same way (its triggers
 *    included, so none is left suspended) and its chain head and row counts are compared with the source's;
 *    any difference rolls everything back.
 *
 * A destination file this copy created is removed again when the copy fails, so a refused copy leaves nothing.
 */
import { realpathSync, rmSync } from 'node:fs';
import { resolve } from 'node:path';
import { EnvironmentError, InputError } from '../errors.ts';
import { type ChainHead } from '../registry/chain.ts';
import {
  COPIED_TABLES,
  type CopiedTable,
  type CopyHandle,
  dialectOf,
  type Dialect,
  isPostgresLocation,
  NOT_COPIED_TABLES,
  type NotCopiedTable,
  readSnapshot,
  redactLocation,
  type RegistrySnapshot,
  tableCounts,
  writeSnapshot,
} from '../registry/copy.ts';
import { openRegistry } from '../registry/open.ts';
import { writeTransaction } from '../registry/records.ts';
import { readTransaction } from '../registry/transaction.ts';
import { verifyRegistry, type VerifyReport } from './registry-admin.ts';

/** A verification that failed on one side of a copy: nothing was written. The CLI exits 3. */
export class CopyCheckError extends Error {
  readonly rule: string;
  readonly side: 'source' | 'destination';
  /** The verify report of that side (its problems), and what else differed from the source. */
  readonly report: VerifyReport;
  readonly differences: string[];

  constructor(side: 'source' | 'destination', report: VerifyReport, differences: string[] = []) {
    super(
      side === 'source'
        ? 'the source registry fails verification; nothing was copied'
        : 'the copy failed its check in the destination; it was rolled back and nothing was written',
    );
    this.name = 'CopyCheckError';
    this.rule = side === 'source' ? 'copy-source-fails-verification' : 'copy-destination-fails-verification';
    this.side = side;
    this.report = report;
    this.differences = differences;
  }
}

export interface CopyReport {
  /** Where from and to, passwords of URLs redacted. */
  from: string;
  to: string;
  from_backend: Dialect;
  to_backend: Dialect;
  /** Rows copied, per table (the same in source and destination). */
  tables: Record<CopiedTable, number>;
  /** Rows of the source left behind, per table: short-lived browser sessions and pending uploads. */
  not_copied: Record<NotCopiedTable, number>;
  /** The audit chain's head, the same in source and destination. */
  chain_head: ChainHead | null;
  /** The destination's own genesis event was replaced by the source's chain. */
  replaced_genesis: boolean;
  /** Audit rows older than the chain (copied as they are; the source's genesis covers them by a digest). */
  pre_chain_audit_rows: number;
  source_verified: { ok: true; checked_versions: number };
  destination_verified: { ok: true; checked_versions: number; chain_head_matches: true; counts_match: true };
}

/** Refuse a location that is neither a usable path nor a well-formed PostgreSQL URL. */
function checkLocation(location: string, option: 'from' | 'to'): void {
  if (location.trim() === '')
    throw new InputError('copy-location', `give the ${option === 'from' ? 'registry to copy' : 'registry to copy into'}`, {}, { option });
  if (!isPostgresLocation(location)) return;
  let url: URL;
  try {
    url = new URL(location);
  } catch {
    throw new InputError(
      'copy-bad-url',
      `${redactLocation(location)} is not a valid PostgreSQL URL (postgres://USER@HOST:PORT/DATABASE)`,
      {},
      { option },
    );
  }
  if (url.hostname === '' && !url.searchParams.has('host'))
    throw new InputError('copy-bad-url', `${redactLocation(location)} names no host (postgres://USER@HOST:PORT/DATABASE)`, {}, { option });
}

/** Where a location points, for "is it the same registry": a real path, or host:port/database of a URL. */
function identityOf(location: string): string {
  if (isPostgresLocation(location)) {
    const url = new URL(location);
    const host = url.hostname || url.searchParams.get('host') || '';
    return `pg:${host.toLowerCase()}:${url.port || '5432'}${decodeURIComponent(url.pathname) || '/'}`;
  }
  try {
    return `file:${realpathSync(location)}`;
  } catch {
    return `file:${resolve(location)}`;
  }
}

const isPg = (h: CopyHandle): boolean => h.pg !== null;

/**
 * Open a registry of either backend (open.ts `openRegistry` takes paths and postgres:// URLs). The source is
 * opened read-only where the backend allows (SQLite); one from an older nkledger is opened writable to bring its
 * schema up to date. A PostgreSQL source must already hold a registry.
 */
async function open(location: string, role: 'source' | 'destination'): Promise<CopyHandle> {
  if (role === 'destination') return openRegistry(location, { create: 'if-folder-exists' });
  try {
    return await openRegistry(location, { create: 'never', readonly: true });
  } catch (err) {
    if (!(err instanceof EnvironmentError && err.rule === 'registry-needs-upgrade')) throw err;
    return openRegistry(location, { create: 'never' });
  }
}

function removeCreated(h: CopyHandle): void {
  if (isPg(h) || !h.created) return;
  for (const suffix of ['', '-wal', '-shm', '-journal']) rmSync(`${h.path}${suffix}`, { force: true });
}

/** Copy the registry at `from` into the new or empty registry at `to` (file paths or postgres:// URLs). */
export async function copyRegistry(from: string, to: string): Promise<CopyReport> {
  checkLocation(from, 'from');
  checkLocation(to, 'to');
  if (identityOf(from) === identityOf(to)) {
    throw new InputError(
      'copy-same-registry',
      `${redactLocation(from)} and ${redactLocation(to)} are the same registry; copy into a new one`,
      {},
      { option: 'to' },
    );
  }
  const source = await open(from, 'source');
  try {
    let sourceReport: VerifyReport | undefined;
    let snapshot: RegistrySnapshot | undefined;
    await readTransaction(source, async () => {
      sourceReport = await verifyRegistry(source);
      if (!sourceReport.ok) throw new CopyCheckError('source', sourceReport);
      snapshot = await readSnapshot(source);
    });
    if (!sourceReport || !snapshot) throw new Error('the source was not read');
    return await copyInto(to, source, sourceReport, snapshot, from);
  } finally {
    await source.close();
  }
}

async function copyInto(to: string, source: CopyHandle, sourceReport: VerifyReport, snapshot: RegistrySnapshot, from: string): Promise<CopyReport> {
  const destination = await open(to, 'destination');
  let ok = false;
  try {
    if (!isPg(destination) && destination.readonly) {
      throw new EnvironmentError(
        'registry-read-only',
        `registry ${redactLocation(to)} cannot be written (the file or its folder is read-only); nothing was written`,
      );
    }
    if (
      !isPg(source) &&
      !isPg(destination) &&
      source.identity &&
      destination.identity &&
      source.identity.dev === destination.identity.dev &&
      source.identity.ino === destination.identity.ino
    ) {
      throw new InputError('copy-same-registry', `${from} and ${to} are the same file; copy into a new one`, {}, { option: 'to' });
    }
    const result = await writeTransaction(destination, async () => {
      const written = await writeSnapshot(destination, snapshot);
      const report = await verifyRegistry(destination);
      if (!report.ok) throw new CopyCheckError('destination', report);
      const problems: string[] = [];
      const sourceHead = sourceReport.chain.head;
      const head = report.chain.head;
      if (head?.hash !== sourceHead?.hash || head?.sequence !== sourceHead?.sequence)
        problems.push(`audit chain head ${head?.hash ?? 'none'} (event ${head?.sequence ?? 0}), the source's is ${sourceHead?.hash ?? 'none'}`);
      const counts = await tableCounts(destination);
      for (const table of COPIED_TABLES) {
        if (counts[table] !== snapshot.rows[table].length)
          problems.push(`${table}: ${counts[table]} rows, the source has ${snapshot.rows[table].length}`);
      }
      if (report.checked_versions !== sourceReport.checked_versions)
        problems.push(`${report.checked_versions} versions verified, the source has ${sourceReport.checked_versions}`);
      if (problems.length > 0) throw new CopyCheckError('destination', report, problems);
      return { written, report };
    });
    ok = true;
    const tables = {} as Record<CopiedTable, number>;
    for (const table of COPIED_TABLES) tables[table] = snapshot.rows[table].length;
    const notCopied = {} as Record<NotCopiedTable, number>;
    for (const table of NOT_COPIED_TABLES) notCopied[table] = snapshot.notCopied[table];
    return {
      from: redactLocation(from),
      to: redactLocation(to),
      from_backend: dialectOf(source),
      to_backend: dialectOf(destination),
      tables,
      not_copied: notCopied,
      chain_head: sourceReport.chain.head,
      replaced_genesis: result.written.replacedGenesis,
      pre_chain_audit_rows: result.written.preChainRows,
      source_verified: { ok: true, checked_versions: sourceReport.checked_versions },
      destination_verified: { ok: true, checked_versions: result.report.checked_versions, chain_head_matches: true, counts_match: true },
    };
  } finally {
    await destination.close();
    if (!ok) removeCreated(destination);
  }
}
