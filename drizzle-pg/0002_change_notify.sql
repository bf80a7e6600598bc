-- Custom SQL migration (drizzle-kit generate --custom): change notices for servers that keep answers in memory.
-- PostgreSQL only: several `nkledger serve` processes may share one PostgreSQL registry, and each remembers small
-- answers (a version's status, who a token stands for, the settings) until the registry changes
-- (src/api/registry-changes.ts). A commit by another server or a CLI writer must reach them: after each
-- statement that writes one of the tables those answers come from, the trigger queues
-- pg_notify('nkledger_changes', '<table>'). PostgreSQL delivers the notice to every session that LISTENs on the
-- channel when (and only if) the transaction commits, once per distinct payload per transaction
-- (src/registry/postgres-changes.ts listens on a dedicated connection and counts them).
--
-- Statement-level AFTER triggers: one notice per writing statement, none for a rolled-back one; TRUNCATE is
-- listed too (the *_no_truncate triggers of 0001 refuse it on materials and material_versions before these
-- would fire). SQLite has no twin: one SQLite file has no other servers to tell, and its readers see other
-- processes' commits through `PRAGMA data_version` (src/registry/hot-reads.ts). The trigger names share the
-- prefix `nkledger_notify_` so the trigger-parity test can tell them from the twins of SQLite's triggers.
CREATE FUNCTION nkledger_notify_change() RETURNS trigger
LANGUAGE plpgsql
AS $$
BEGIN
  PERFORM pg_notify('nkledger_changes', TG_TABLE_NAME);
  RETURN NULL;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER "nkledger_notify_materials"
AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON "materials"
FOR EACH STATEMENT EXECUTE FUNCTION nkledger_notify_change();
--> statement-breakpoint
CREATE TRIGGER "nkledger_notify_material_versions"
AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON "material_versions"
FOR EACH STATEMENT EXECUTE FUNCTION nkledger_notify_change();
--> statement-breakpoint
CREATE TRIGGER "nkledger_notify_api_tokens"
AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON "api_tokens"
FOR EACH STATEMENT EXECUTE FUNCTION nkledger_notify_change();
--> statement-breakpoint
CREATE TRIGGER "nkledger_notify_registry_settings"
AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON "registry_settings"
FOR EACH STATEMENT EXECUTE FUNCTION nkledger_notify_change();
