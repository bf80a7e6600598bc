-- Custom SQL migration (drizzle-kit generate --custom): the registry's rules enforced by PostgreSQL itself, the
-- twins of the SQLite triggers of drizzle/0001_immutability.sql (as 0005 extended it to `preamble` and
-- `absent_columns`) and drizzle/0007_audit_chain_append.sql: same trigger names, same conditions (SQLite's
-- `IS NOT` is `IS DISTINCT FROM`), same refusal texts. Every refusal goes through nkledger_refuse(), which
-- raises the trigger's argument with SQLSTATE 23000 (integrity_constraint_violation: SQLite reports its
-- RAISE(ABORT) as SQLITE_CONSTRAINT_TRIGGER). `verify` still recomputes every hash, which catches edits made
-- after someone drops or disables these triggers.
--
-- No rows to seed: SQLite's migrations insert none into a new registry (0003 only carried over a table that
-- never exists here); the chain's genesis event is appended by nkledger when it opens the registry.
--
-- Only PostgreSQL has TRUNCATE, which skips row-level DELETE triggers: the *_no_truncate triggers refuse it
-- with the message of the matching *_no_delete trigger.
--
-- nkledger_write_lock(): every write transaction calls it first. It takes a transaction-scoped advisory lock on
-- one fixed key (the bytes of "nkledger" as a bigint), released at COMMIT or ROLLBACK, so writers on any number
-- of servers run one at a time as under SQLite's BEGIN IMMEDIATE. That keeps version numbers gap-free and
-- distinct (the next number is materials.last_version + 1, read and written under the lock) and the audit hash
-- chain linear (each event links to the head it read). Advisory locks belong to one database, so registries
-- in other databases of the same server do not wait for each other.
CREATE FUNCTION nkledger_write_lock() RETURNS void
LANGUAGE sql VOLATILE
AS $$ SELECT pg_advisory_xact_lock(7956572349412107634) $$;
--> statement-breakpoint
CREATE FUNCTION nkledger_refuse() RETURNS trigger
LANGUAGE plpgsql
AS $$
BEGIN
  RAISE EXCEPTION USING MESSAGE = TG_ARGV[0], ERRCODE = 'integrity_constraint_violation';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER "material_versions_content_immutable"
BEFORE UPDATE ON "material_versions"
FOR EACH ROW
WHEN (OLD."content" IS DISTINCT FROM NEW."content" OR OLD."sha256" IS DISTINCT FROM NEW."sha256"
  OR OLD."material_id" IS DISTINCT FROM NEW."material_id" OR OLD."number" IS DISTINCT FROM NEW."number"
  OR OLD."sample" IS DISTINCT FROM NEW."sample" OR OLD."substrate" IS DISTINCT FROM NEW."substrate"
  OR OLD."process" IS DISTINCT FROM NEW."process" OR OLD."instrument" IS DISTINCT FROM NEW."instrument"
  OR OLD."method" IS DISTINCT FROM NEW."method" OR OLD."angles_deg" IS DISTINCT FROM NEW."angles_deg"
  OR OLD."measured_on" IS DISTINCT FROM NEW."measured_on" OR OLD."operator" IS DISTINCT FROM NEW."operator"
  OR OLD."source_file" IS DISTINCT FROM NEW."source_file" OR OLD."source_sha256" IS DISTINCT FROM NEW."source_sha256"
  OR OLD."notes" IS DISTINCT FROM NEW."notes"
  OR OLD."preamble" IS DISTINCT FROM NEW."preamble" OR OLD."absent_columns" IS DISTINCT FROM NEW."absent_columns"
  OR OLD."created_by" IS DISTINCT FROM NEW."created_by"
  OR OLD."created_at" IS DISTINCT FROM NEW."created_at" OR OLD."id" IS DISTINCT FROM NEW."id")
EXECUTE FUNCTION nkledger_refuse('nkledger: version content, provenance and identity are immutable (a correction is a new version)');
--> statement-breakpoint
CREATE TRIGGER "material_versions_status_transitions"
BEFORE UPDATE OF "status" ON "material_versions"
FOR EACH ROW
WHEN (NOT (OLD."status" = NEW."status"
  OR (OLD."status" = 'draft' AND NEW."status" IN ('approved', 'withdrawn'))
  OR (OLD."status" = 'approved' AND NEW."status" = 'retired')))
EXECUTE FUNCTION nkledger_refuse('nkledger: status may only go draft -> approved -> retired, or draft -> withdrawn');
--> statement-breakpoint
CREATE TRIGGER "material_versions_lifecycle_set_once"
BEFORE UPDATE ON "material_versions"
FOR EACH ROW
WHEN ((OLD."approved_by" IS NOT NULL AND OLD."approved_by" IS DISTINCT FROM NEW."approved_by")
  OR (OLD."approved_at" IS NOT NULL AND OLD."approved_at" IS DISTINCT FROM NEW."approved_at")
  OR (OLD."self_approved" IS NOT NULL AND OLD."self_approved" IS DISTINCT FROM NEW."self_approved")
  OR (OLD."retired_by" IS NOT NULL AND OLD."retired_by" IS DISTINCT FROM NEW."retired_by")
  OR (OLD."retired_at" IS NOT NULL AND OLD."retired_at" IS DISTINCT FROM NEW."retired_at")
  OR (OLD."retire_reason" IS NOT NULL AND OLD."retire_reason" IS DISTINCT FROM NEW."retire_reason")
  OR (OLD."withdrawn_by" IS NOT NULL AND OLD."withdrawn_by" IS DISTINCT FROM NEW."withdrawn_by")
  OR (OLD."withdrawn_at" IS NOT NULL AND OLD."withdrawn_at" IS DISTINCT FROM NEW."withdrawn_at")
  OR (OLD."withdraw_reason" IS NOT NULL AND OLD."withdraw_reason" IS DISTINCT FROM NEW."withdraw_reason"))
EXECUTE FUNCTION nkledger_refuse('nkledger: approval, retirement and withdrawal records are written once');
--> statement-breakpoint
CREATE TRIGGER "material_versions_no_delete"
BEFORE DELETE ON "material_versions"
FOR EACH ROW
EXECUTE FUNCTION nkledger_refuse('nkledger: versions are never deleted (retire or withdraw instead)');
--> statement-breakpoint
CREATE TRIGGER "material_versions_no_truncate"
BEFORE TRUNCATE ON "material_versions"
FOR EACH STATEMENT
EXECUTE FUNCTION nkledger_refuse('nkledger: versions are never deleted (retire or withdraw instead)');
--> statement-breakpoint
CREATE TRIGGER "materials_no_delete"
BEFORE DELETE ON "materials"
FOR EACH ROW
EXECUTE FUNCTION nkledger_refuse('nkledger: materials are never deleted');
--> statement-breakpoint
CREATE TRIGGER "materials_no_truncate"
BEFORE TRUNCATE ON "materials"
FOR EACH STATEMENT
EXECUTE FUNCTION nkledger_refuse('nkledger: materials are never deleted');
--> statement-breakpoint
CREATE TRIGGER "materials_identity_immutable"
BEFORE UPDATE ON "materials"
FOR EACH ROW
WHEN (OLD."id" IS DISTINCT FROM NEW."id" OR OLD."slug" IS DISTINCT FROM NEW."slug"
  OR OLD."created_by" IS DISTINCT FROM NEW."created_by" OR OLD."created_at" IS DISTINCT FROM NEW."created_at"
  OR NEW."last_version" < OLD."last_version")
EXECUTE FUNCTION nkledger_refuse('nkledger: a material''s slug and creation record never change, and version numbers are never reused');
--> statement-breakpoint
CREATE TRIGGER "audit_log_no_update"
BEFORE UPDATE ON "audit_log"
FOR EACH ROW
EXECUTE FUNCTION nkledger_refuse('nkledger: the audit log is append-only');
--> statement-breakpoint
CREATE TRIGGER "audit_log_no_delete"
BEFORE DELETE ON "audit_log"
FOR EACH ROW
EXECUTE FUNCTION nkledger_refuse('nkledger: the audit log is append-only');
--> statement-breakpoint
CREATE TRIGGER "audit_log_no_truncate"
BEFORE TRUNCATE ON "audit_log"
FOR EACH STATEMENT
EXECUTE FUNCTION nkledger_refuse('nkledger: the audit log is append-only');
--> statement-breakpoint
-- The twin of drizzle/0007's audit_log_chain_append. PostgreSQL allows no subquery in a trigger's WHEN, so the
-- head of the chain is read in the function. Under nkledger_write_lock() the head cannot move meanwhile; a
-- writer that skips the lock and races another still cannot fork the chain (unique index audit_log_prev_hash).
CREATE FUNCTION nkledger_audit_chain_append() RETURNS trigger
LANGUAGE plpgsql
AS $$
BEGIN
  IF NEW."hash" IS NULL
    OR NEW."prev_hash" IS DISTINCT FROM (SELECT "hash" FROM "audit_log" ORDER BY "id" DESC LIMIT 1) THEN
    RAISE EXCEPTION USING MESSAGE = 'nkledger: an audit event must carry its hash and extend the chain at its head',
      ERRCODE = 'integrity_constraint_violation';
  END IF;
  RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER "audit_log_chain_append"
BEFORE INSERT ON "audit_log"
FOR EACH ROW
EXECUTE FUNCTION nkledger_audit_chain_append();
