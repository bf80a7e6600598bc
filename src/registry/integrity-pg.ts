/**
 * The PostgreSQL registry's own defences as `verify` can check them (the twin of integrity.ts's trigger check):
 * the triggers and functions the migrations in drizzle-pg/ create, read from the catalogue (pg_trigger,
 * pg_proc) and compared with what a freshly migrated database holds (PG_DEFENCES below; test/registry/
 * pg-integrity.test.ts keeps it equal to the catalogue of a new database, so a migration that changes a trigger
 * must change it too). A trigger is compared by its whole definition as PostgreSQL prints it
 * (pg_get_triggerdef: events, columns, WHEN condition, function and arguments), so a same-named trigger that
 * never fires is caught; a function by its language and body as written. Only catalogue reads: the check runs
 * inside a READ ONLY transaction.
 */

/** Anything that runs a query the way a node-postgres Client or Pool does. */
export interface PgQueryable {
  query<R extends object>(text: string): Promise<{ rows: R[] }>;
}

export interface PgTrigger {
  name: string;
  /** pg_get_triggerdef with the schema prefix of the table removed. */
  definition: string;
  /** pg_trigger.tgenabled: 'O' fires normally; 'D' disabled (ALTER TABLE … DISABLE TRIGGER); 'R'/'A' replica modes. */
  enabled: string;
}

export interface PgFunction {
  name: string;
  language: string;
  /** The body as written, whitespace runs made one space. */
  body: string;
}

/** The registry's triggers and functions (those of the current schema), read from the catalogue. */
export async function readPgDefences(db: PgQueryable): Promise<{ triggers: PgTrigger[]; functions: PgFunction[] }> {
  const triggers = await db.query<{ name: string; definition: string; enabled: string; schema: string }>(
    `SELECT t.tgname AS name, pg_get_triggerdef(t.oid) AS definition, t.tgenabled AS enabled, n.nspname AS schema
       FROM pg_trigger t JOIN pg_class c ON c.oid = t.tgrelid JOIN pg_namespace n ON n.oid = c.relnamespace
      WHERE NOT t.tgisinternal AND n.nspname = current_schema() ORDER BY t.tgname`,
  );
  const functions = await db.query<PgFunction>(
    `SELECT p.proname AS name, l.lanname AS language, p.prosrc AS body
       FROM pg_proc p JOIN pg_language l ON l.oid = p.prolang JOIN pg_namespace n ON n.oid = p.pronamespace
      WHERE n.nspname = current_schema() ORDER BY p.proname`,
  );
  return {
    triggers: triggers.rows.map((t) => ({ name: t.name, definition: t.definition.split(` ON ${t.schema}.`).join(' ON '), enabled: t.enabled })),
    // Whitespace runs count as one space: the body is stored as written, and line endings may differ on checkout.
    functions: functions.rows.map((f) => ({ ...f, body: f.body.replace(/\s+/g, ' ').trim() })),
  };
}

export interface PgDefenceCheck {
  missing: string[];
  /** Present under the expected name with another definition (a function: `function NAME`). */
  altered: string[];
  /** Triggers and functions no migration created. */
  unexpected: string[];
  /** Triggers that are there but do not fire (ALTER TABLE … DISABLE TRIGGER, or replica-only). */
  disabled: string[];
}

/** Compare the catalogue with what the migrations create. */
export async function checkPgDefences(db: PgQueryable, expected = PG_DEFENCES): Promise<PgDefenceCheck> {
  const actual = await readPgDefences(db);
  const out: PgDefenceCheck = { missing: [], altered: [], unexpected: [], disabled: [] };
  const triggers = new Map(actual.triggers.map((t) => [t.name, t]));
  for (const [name, definition] of Object.entries(expected.triggers)) {
    const have = triggers.get(name);
    if (!have) out.missing.push(name);
    else {
      if (have.definition !== definition) out.altered.push(name);
      if (have.enabled !== 'O') out.disabled.push(name);
    }
  }
  for (const name of triggers.keys()) if (!(name in expected.triggers)) out.unexpected.push(name);
  const functions = new Map(actual.functions.map((f) => [f.name, `${f.language}:${f.body}`]));
  for (const [name, definition] of Object.entries(expected.functions)) {
    const have = functions.get(name);
    if (have === undefined) out.missing.push(`function ${name}`);
    else if (have !== definition) out.altered.push(`function ${name}`);
  }
  for (const name of functions.keys()) if (!(name in expected.functions)) out.unexpected.push(`function ${name}`);
  return out;
}

/** The catalogue of a database migrated from drizzle-pg/: trigger name → definition, function name → `language:body`. */
export const PG_DEFENCES: { triggers: Record<string, string>; functions: Record<string, string> } = {
  triggers: {
    audit_log_chain_append:
      'CREATE TRIGGER audit_log_chain_append BEFORE INSERT ON audit_log FOR EACH ROW EXECUTE FUNCTION nkledger_audit_chain_append()',
    audit_log_no_delete:
      "CREATE TRIGGER audit_log_no_delete BEFORE DELETE ON audit_log FOR EACH ROW EXECUTE FUNCTION nkledger_refuse('nkledger: the audit log is append-only')",
    audit_log_no_truncate:
      "CREATE TRIGGER audit_log_no_truncate BEFORE TRUNCATE ON audit_log FOR EACH STATEMENT EXECUTE FUNCTION nkledger_refuse('nkledger: the audit log is append-only')",
    audit_log_no_update:
      "CREATE TRIGGER audit_log_no_update BEFORE UPDATE ON audit_log FOR EACH ROW EXECUTE FUNCTION nkledger_refuse('nkledger: the audit log is append-only')",
    material_versions_content_immutable:
      "CREATE TRIGGER material_versions_content_immutable BEFORE UPDATE ON material_versions FOR EACH ROW WHEN (((old.content IS DISTINCT FROM new.content) OR (old.sha256 IS DISTINCT FROM new.sha256) OR (old.material_id IS DISTINCT FROM new.material_id) OR (old.number IS DISTINCT FROM new.number) OR (old.sample IS DISTINCT FROM new.sample) OR (old.substrate IS DISTINCT FROM new.substrate) OR (old.process IS DISTINCT FROM new.process) OR (old.instrument IS DISTINCT FROM new.instrument) OR (old.method IS DISTINCT FROM new.method) OR (old.angles_deg IS DISTINCT FROM new.angles_deg) OR (old.measured_on IS DISTINCT FROM new.measured_on) OR (old.operator IS DISTINCT FROM new.operator) OR (old.source_file IS DISTINCT FROM new.source_file) OR (old.source_sha256 IS DISTINCT FROM new.source_sha256) OR (old.notes IS DISTINCT FROM new.notes) OR (old.preamble IS DISTINCT FROM new.preamble) OR (old.absent_columns IS DISTINCT FROM new.absent_columns) OR (old.created_by IS DISTINCT FROM new.created_by) OR (old.created_at IS DISTINCT FROM new.created_at) OR (old.id IS DISTINCT FROM new.id))) EXECUTE FUNCTION nkledger_refuse('nkledger: version content, provenance and identity are immutable (a correction is a new version)')",
    material_versions_lifecycle_set_once:
      "CREATE TRIGGER material_versions_lifecycle_set_once BEFORE UPDATE ON material_versions FOR EACH ROW WHEN ((((old.approved_by IS NOT NULL) AND (old.approved_by IS DISTINCT FROM new.approved_by)) OR ((old.approved_at IS NOT NULL) AND (old.approved_at IS DISTINCT FROM new.approved_at)) OR ((old.self_approved IS NOT NULL) AND (old.self_approved IS DISTINCT FROM new.self_approved)) OR ((old.retired_by IS NOT NULL) AND (old.retired_by IS DISTINCT FROM new.retired_by)) OR ((old.retired_at IS NOT NULL) AND (old.retired_at IS DISTINCT FROM new.retired_at)) OR ((old.retire_reason IS NOT NULL) AND (old.retire_reason IS DISTINCT FROM new.retire_reason)) OR ((old.withdrawn_by IS NOT NULL) AND (old.withdrawn_by IS DISTINCT FROM new.withdrawn_by)) OR ((old.withdrawn_at IS NOT NULL) AND (old.withdrawn_at IS DISTINCT FROM new.withdrawn_at)) OR ((old.withdraw_reason IS NOT NULL) AND (old.withdraw_reason IS DISTINCT FROM new.withdraw_reason)))) EXECUTE FUNCTION nkledger_refuse('nkledger: approval, retirement and withdrawal records are written once')",
    material_versions_no_delete:
      "CREATE TRIGGER material_versions_no_delete BEFORE DELETE ON material_versions FOR EACH ROW EXECUTE FUNCTION nkledger_refuse('nkledger: versions are never deleted (retire or withdraw instead)')",
    material_versions_no_truncate:
      "CREATE TRIGGER material_versions_no_truncate BEFORE TRUNCATE ON material_versions FOR EACH STATEMENT EXECUTE FUNCTION nkledger_refuse('nkledger: versions are never deleted (retire or withdraw instead)')",
    material_versions_status_transitions:
      "CREATE TRIGGER material_versions_status_transitions BEFORE UPDATE OF status ON material_versions FOR EACH ROW WHEN ((NOT ((old.status = new.status) OR ((old.status = 'draft'::text) AND (new.status = ANY (ARRAY['approved'::text, 'withdrawn'::text]))) OR ((old.status = 'approved'::text) AND (new.status = 'retired'::text))))) EXECUTE FUNCTION nkledger_refuse('nkledger: status may only go draft -> approved -> retired, or draft -> withdrawn')",
    materials_identity_immutable:
      "CREATE TRIGGER materials_identity_immutable BEFORE UPDATE ON materials FOR EACH ROW WHEN (((old.id IS DISTINCT FROM new.id) OR (old.slug IS DISTINCT FROM new.slug) OR (old.created_by IS DISTINCT FROM new.created_by) OR (old.created_at IS DISTINCT FROM new.created_at) OR (new.last_version < old.last_version))) EXECUTE FUNCTION nkledger_refuse('nkledger: a material''s slug and creation record never change, and version numbers are never reused')",
    materials_no_delete:
      "CREATE TRIGGER materials_no_delete BEFORE DELETE ON materials FOR EACH ROW EXECUTE FUNCTION nkledger_refuse('nkledger: materials are never deleted')",
    materials_no_truncate:
      "CREATE TRIGGER materials_no_truncate BEFORE TRUNCATE ON materials FOR EACH STATEMENT EXECUTE FUNCTION nkledger_refuse('nkledger: materials are never deleted')",
    // Change notices for servers' memos (drizzle-pg/0002): a dropped one would leave another server trusting stale answers.
    nkledger_notify_api_tokens:
      'CREATE TRIGGER nkledger_notify_api_tokens AFTER INSERT OR DELETE OR UPDATE OR TRUNCATE ON api_tokens FOR EACH STATEMENT EXECUTE FUNCTION nkledger_notify_change()',
    nkledger_notify_material_versions:
      'CREATE TRIGGER nkledger_notify_material_versions AFTER INSERT OR DELETE OR UPDATE OR TRUNCATE ON material_versions FOR EACH STATEMENT EXECUTE FUNCTION nkledger_notify_change()',
    nkledger_notify_materials:
      'CREATE TRIGGER nkledger_notify_materials AFTER INSERT OR DELETE OR UPDATE OR TRUNCATE ON materials FOR EACH STATEMENT EXECUTE FUNCTION nkledger_notify_change()',
    nkledger_notify_registry_settings:
      'CREATE TRIGGER nkledger_notify_registry_settings AFTER INSERT OR DELETE OR UPDATE OR TRUNCATE ON registry_settings FOR EACH STATEMENT EXECUTE FUNCTION nkledger_notify_change()',
  },
  functions: {
    nkledger_audit_chain_append:
      'plpgsql:BEGIN IF NEW."hash" IS NULL OR NEW."prev_hash" IS DISTINCT FROM (SELECT "hash" FROM "audit_log" ORDER BY "id" DESC LIMIT 1) THEN RAISE EXCEPTION USING MESSAGE = \'nkledger: an audit event must carry its hash and extend the chain at its head\', ERRCODE = \'integrity_constraint_violation\'; END IF; RETURN NEW; END;',
    nkledger_notify_change: "plpgsql:BEGIN PERFORM pg_notify('nkledger_changes', TG_TABLE_NAME); RETURN NULL; END;",
    nkledger_refuse: "plpgsql:BEGIN RAISE EXCEPTION USING MESSAGE = TG_ARGV[0], ERRCODE = 'integrity_constraint_violation'; END;",
    nkledger_write_lock: 'sql:SELECT pg_advisory_xact_lock(7956572349412107634)',
  },
};
