/**
 * The audit log as a hash chain. Every event stores the hash of the event before it and its own hash,
 * the SHA-256 of its canonical JSON (canonical.ts, RFC 8785 form):
 *
 *   { "type": "version.approve", "actor": "bob", "time": "2024-05-01T09:30:00.000Z",
 *     "material": "sin-pecvd-a", "version": 3, "content_sha256": "<64 hex>",
 *     "status_change": { "from": "draft", "to": "approved" }, "details": { ... }, "prev_hash": "<64 hex>" }
 *
 * Every key is present (null when the event has no such thing). Values are strings, booleans, null,
 * arrays, objects and safe integers only, no fractions: RFC 8785 then fixes every byte, so another
 * backend (PostgreSQL) storing the same columns yields the same text and hash. Events are appended inside
 * the write transaction of the change they record. The chain starts at a `chain.genesis` event
 * (prev_hash null) whose details list every version stored at that time (hash, status, approver…) and a
 * digest of the audit rows written before the chain existed, so an upgraded registry is covered too.
 */
import { sql } from 'drizzle-orm';
import { canonicalJson, sha256Hex } from './canonical.ts';
import type { Registry } from './open.ts';
import { formatRef } from './refs.ts';
import { binaryCollate, execute, queryRow, queryRows } from './sql.ts';
import { immediateTransaction } from './transaction.ts';

export const GENESIS_TYPE = 'chain.genesis';
/** The actor of events nkledger writes by itself (the genesis event). */
export const SYSTEM_ACTOR = 'nkledger';

/** An audit_log row as stored (snake_case, as SQLite returns it). */
export interface AuditRow {
  id: number;
  at: string;
  actor: string;
  action: string;
  material_id: number | null;
  version_id: number | null;
  detail: string;
  material: string | null;
  version_number: number | null;
  content_sha256: string | null;
  status_from: string | null;
  status_to: string | null;
  prev_hash: string | null;
  hash: string | null;
}

/** What a caller records; the chain fields are filled in by `appendEvent`. */
export interface NewEvent {
  actor: string;
  action: string;
  materialId?: number;
  versionId?: number;
  /** Slug of the material concerned. */
  material?: string;
  /** Number of the version concerned. */
  version?: number;
  /** Content SHA-256 of the version concerned (every version event carries it). */
  contentSha256?: string;
  /** Status change of a version event; `from` is null for an import. */
  status?: { from: string | null; to: string };
  detail?: Record<string, unknown>;
}

/** The position and hash of the newest event: what `verify --json` reports and a lockfile records. */
export interface ChainHead {
  hash: string;
  /** 1 for the genesis event, then 2, 3, …: the event's place in the chain. */
  sequence: number;
}

/** The document an event's hash is taken over (see the file header). */
export function eventDocument(row: AuditRow): Record<string, unknown> {
  return {
    type: row.action,
    actor: row.actor,
    time: row.at,
    material: row.material,
    version: row.version_number,
    content_sha256: row.content_sha256,
    status_change: row.status_to === null ? null : { from: row.status_from, to: row.status_to },
    details: JSON.parse(row.detail) as unknown,
    prev_hash: row.prev_hash,
  };
}

/** Refuse values another backend could write differently: fractions and unsafe integers. */
function assertPortable(value: unknown, path: string): void {
  if (typeof value === 'number' && !Number.isSafeInteger(value)) {
    throw new TypeError(`audit event ${path} = ${value}: only safe integers may appear in a chained event`);
  }
  if (value !== null && typeof value === 'object') {
    for (const [key, v] of Object.entries(value as Record<string, unknown>)) assertPortable(v, `${path}.${key}`);
  }
}

/** SHA-256 of an event's canonical JSON. */
export function eventHash(row: AuditRow): string {
  const doc = eventDocument(row);
  assertPortable(doc, 'event');
  return sha256Hex(canonicalJson(doc));
}

/** Hash of the newest event (null when the chain has not started). Call inside the write transaction. */
async function headHash(registry: Registry): Promise<string | null> {
  const head = await queryRow<{ hash: string | null }>(registry, sql`SELECT hash FROM audit_log ORDER BY id DESC LIMIT 1`);
  return head?.hash ?? null;
}

/** Append an event at the head of the chain. Must run inside the write transaction of the change it records. */
export async function appendEvent(registry: Registry, event: NewEvent): Promise<void> {
  const r: Omit<AuditRow, 'id'> = {
    at: new Date().toISOString(),
    actor: event.actor,
    action: event.action,
    material_id: event.materialId ?? null,
    version_id: event.versionId ?? null,
    detail: JSON.stringify(event.detail ?? {}),
    material: event.material ?? null,
    version_number: event.version ?? null,
    content_sha256: event.contentSha256 ?? null,
    status_from: event.status?.from ?? null,
    status_to: event.status?.to ?? null,
    prev_hash: await headHash(registry),
    hash: null,
  };
  r.hash = eventHash({ id: 0, ...r });
  await execute(
    registry,
    sql`INSERT INTO audit_log (at, actor, action, material_id, version_id, detail, material, version_number,
      content_sha256, status_from, status_to, prev_hash, hash)
      VALUES (${r.at}, ${r.actor}, ${r.action}, ${r.material_id}, ${r.version_id}, ${r.detail}, ${r.material}, ${r.version_number},
      ${r.content_sha256}, ${r.status_from}, ${r.status_to}, ${r.prev_hash}, ${r.hash})`,
  );
}

/** The newest event's hash and place in the chain, or null before the genesis. */
export async function chainHead(registry: Registry): Promise<ChainHead | null> {
  const hash = await headHash(registry);
  if (!hash) return null;
  const counted = await queryRow<{ n: number }>(registry, sql`SELECT count(*) AS n FROM audit_log WHERE hash IS NOT NULL`);
  return { hash, sequence: Number(counted?.n ?? 0) };
}

/** Every audit row, oldest first. */
export async function readAuditRows(registry: Registry): Promise<AuditRow[]> {
  return queryRows<AuditRow>(registry, sql`SELECT * FROM audit_log ORDER BY id`);
}

/** Digest of the rows written before the chain existed, as the genesis event records it. */
export function earlierEventsSha256(rows: AuditRow[]): string {
  return sha256Hex(
    canonicalJson(
      rows.map((r) => ({
        id: r.id,
        at: r.at,
        actor: r.actor,
        action: r.action,
        material_id: r.material_id,
        version_id: r.version_id,
        detail: r.detail,
      })),
    ),
  );
}

/** A version as the chain knows it. */
export interface ChainedVersion {
  ref: string;
  sha256: string;
  status: string;
  created_by: string | null;
  approved_by: string | null;
  retired_by: string | null;
  withdrawn_by: string | null;
}

interface StoredVersionState {
  slug: string;
  number: number;
  sha256: string;
  status: string;
  created_by: string;
  approved_by: string | null;
  retired_by: string | null;
  withdrawn_by: string | null;
}

/** Every version's stored hash, status and lifecycle actors, by slug then number. */
export async function storedVersionStates(registry: Registry): Promise<StoredVersionState[]> {
  return queryRows<StoredVersionState>(
    registry,
    sql`SELECT m.slug, v.number, v.sha256, v.status, v.created_by, v.approved_by, v.retired_by, v.withdrawn_by
      FROM material_versions v JOIN materials m ON m.id = v.material_id ORDER BY m.slug${binaryCollate(registry)}, v.number`,
  );
}

/**
 * Start the chain if it has not started: on a fresh registry and on one upgraded from before the chain.
 * One write transaction, re-checked inside, so concurrent first opens append one genesis only.
 */
export async function ensureGenesis(registry: Registry): Promise<void> {
  if ((await headHash(registry)) !== null) return;
  await immediateTransaction(registry, async () => {
    if ((await headHash(registry)) !== null) return;
    const earlier = await readAuditRows(registry);
    const versions: ChainedVersion[] = (await storedVersionStates(registry)).map((v) => ({
      ref: formatRef(v.slug, v.number),
      sha256: v.sha256,
      status: v.status,
      created_by: v.created_by,
      approved_by: v.approved_by,
      retired_by: v.retired_by,
      withdrawn_by: v.withdrawn_by,
    }));
    await appendEvent(registry, {
      actor: SYSTEM_ACTOR,
      action: GENESIS_TYPE,
      detail: { versions, earlier_events: earlier.length, earlier_events_sha256: earlierEventsSha256(earlier) },
    });
  });
}

/** What walking the chain found. */
export interface ChainWalk {
  head: ChainHead | null;
  /** Broken links, wrong hashes, rows outside the chain. Empty when the chain is whole. */
  problems: string[];
  /** Every version as the chain's events describe it, by ref. */
  versions: Map<string, ChainedVersion>;
  /** Hash of every chained event by its place in the chain (index 0 = sequence 1). */
  hashes: string[];
}

/**
 * Walk the chain from the genesis: every link, every event's hash, the digest of the rows before the
 * genesis; and replay the version events into the state they describe. Pure (takes the rows).
 */
export function walkChain(rows: AuditRow[]): ChainWalk {
  const problems: string[] = [];
  const versions = new Map<string, ChainedVersion>();
  const hashes: string[] = [];
  const start = rows.findIndex((r) => r.hash !== null || r.prev_hash !== null);
  if (start < 0) return { head: null, problems: ['the audit log has no hash chain (no chain.genesis event)'], versions, hashes };
  const genesis = rows[start];
  if (genesis.action !== GENESIS_TYPE) problems.push(`audit event ${genesis.id}: the chain does not start with a ${GENESIS_TYPE} event`);
  let prev: string | null = null;
  for (let i = start; i < rows.length; i++) {
    const row = rows[i];
    const where = `audit event ${row.id} (${row.action}, sequence ${i - start + 1})`;
    if (row.prev_hash !== prev) problems.push(`${where}: its prev_hash does not name the event before it (the chain was cut or edited)`);
    let computed: string | null = null;
    try {
      computed = eventHash(row);
    } catch (err) {
      problems.push(`${where}: cannot be hashed: ${(err as Error).message}`);
    }
    if (computed !== null && computed !== row.hash) problems.push(`${where}: its content no longer matches its hash (edited after it was written)`);
    prev = row.hash;
    hashes.push(row.hash ?? '');
    if (i > start && row.action === GENESIS_TYPE) problems.push(`${where}: a second ${GENESIS_TYPE} event`);
    replay(row, versions, problems, where);
  }
  const details = safeDetail(genesis);
  const earlier = rows.slice(0, start);
  if (details.earlier_events !== earlier.length || details.earlier_events_sha256 !== earlierEventsSha256(earlier)) {
    problems.push(`the ${earlier.length} audit rows written before the chain started no longer match the digest its genesis event recorded`);
  }
  const last = rows[rows.length - 1];
  return { head: last.hash ? { hash: last.hash, sequence: rows.length - start } : null, problems, versions, hashes };
}

function safeDetail(row: AuditRow): Record<string, unknown> {
  try {
    const value = JSON.parse(row.detail) as unknown;
    return value !== null && typeof value === 'object' ? (value as Record<string, unknown>) : {};
  } catch {
    return {};
  }
}

/** Apply one event to the version states it describes; an event that does not fit is a problem. */
function replay(row: AuditRow, versions: Map<string, ChainedVersion>, problems: string[], where: string): void {
  if (row.action === GENESIS_TYPE) {
    const listed = safeDetail(row).versions;
    if (Array.isArray(listed)) for (const v of listed as ChainedVersion[]) versions.set(v.ref, { ...v });
    return;
  }
  if (row.status_to === null || row.material === null || row.version_number === null) return;
  const ref = formatRef(row.material, row.version_number);
  const known = versions.get(ref);
  if (row.status_from === null) {
    if (known) problems.push(`${where}: imports ${ref}, which the chain already holds`);
    versions.set(ref, {
      ref,
      sha256: row.content_sha256 ?? '',
      status: row.status_to,
      created_by: row.actor,
      approved_by: null,
      retired_by: null,
      withdrawn_by: null,
    });
    return;
  }
  if (!known) return void problems.push(`${where}: changes the status of ${ref}, which the chain never recorded`);
  if (known.status !== row.status_from) problems.push(`${where}: moves ${ref} from ${row.status_from}, but the chain has it ${known.status}`);
  if (row.content_sha256 !== known.sha256)
    problems.push(`${where}: names content ${row.content_sha256?.slice(0, 12)}… for ${ref}, the chain recorded ${known.sha256.slice(0, 12)}…`);
  known.status = row.status_to;
  if (row.status_to === 'approved') known.approved_by = row.actor;
  if (row.status_to === 'retired') known.retired_by = row.actor;
  if (row.status_to === 'withdrawn') known.withdrawn_by = row.actor;
}
