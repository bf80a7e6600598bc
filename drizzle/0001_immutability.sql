-- Custom SQL migration (drizzle-kit generate --custom): the registry's rules enforced by SQLite itself,
-- so even raw SQL cannot rewrite content, hashes, provenance or history, nor delete anything.
-- `verify` still recomputes every hash, which catches edits made after someone drops these triggers.
CREATE TRIGGER `material_versions_content_immutable`
BEFORE UPDATE ON `material_versions`
WHEN OLD.`content` IS NOT NEW.`content` OR OLD.`sha256` IS NOT NEW.`sha256`
  OR OLD.`material_id` IS NOT NEW.`material_id` OR OLD.`number` IS NOT NEW.`number`
  OR OLD.`sample` IS NOT NEW.`sample` OR OLD.`substrate` IS NOT NEW.`substrate`
  OR OLD.`process` IS NOT NEW.`process` OR OLD.`instrument` IS NOT NEW.`instrument`
  OR OLD.`method` IS NOT NEW.`method` OR OLD.`angles_deg` IS NOT NEW.`angles_deg`
  OR OLD.`measured_on` IS NOT NEW.`measured_on` OR OLD.`operator` IS NOT NEW.`operator`
  OR OLD.`source_file` IS NOT NEW.`source_file` OR OLD.`source_sha256` IS NOT NEW.`source_sha256`
  OR OLD.`notes` IS NOT NEW.`notes` OR OLD.`created_by` IS NOT NEW.`created_by`
  OR OLD.`created_at` IS NOT NEW.`created_at` OR OLD.`id` IS NOT NEW.`id`
BEGIN
  SELECT RAISE(ABORT, 'nkledger: version content, provenance and identity are immutable (a correction is a new version)');
END;
--> statement-breakpoint
CREATE TRIGGER `material_versions_status_transitions`
BEFORE UPDATE OF `status` ON `material_versions`
WHEN NOT (OLD.`status` = NEW.`status`
  OR (OLD.`status` = 'draft' AND NEW.`status` IN ('approved', 'withdrawn'))
  OR (OLD.`status` = 'approved' AND NEW.`status` = 'retired'))
BEGIN
  SELECT RAISE(ABORT, 'nkledger: status may only go draft -> approved -> retired, or draft -> withdrawn');
END;
--> statement-breakpoint
CREATE TRIGGER `material_versions_lifecycle_set_once`
BEFORE UPDATE ON `material_versions`
WHEN (OLD.`approved_by` IS NOT NULL AND OLD.`approved_by` IS NOT NEW.`approved_by`)
  OR (OLD.`approved_at` IS NOT NULL AND OLD.`approved_at` IS NOT NEW.`approved_at`)
  OR (OLD.`self_approved` IS NOT NULL AND OLD.`self_approved` IS NOT NEW.`self_approved`)
  OR (OLD.`retired_by` IS NOT NULL AND OLD.`retired_by` IS NOT NEW.`retired_by`)
  OR (OLD.`retired_at` IS NOT NULL AND OLD.`retired_at` IS NOT NEW.`retired_at`)
  OR (OLD.`retire_reason` IS NOT NULL AND OLD.`retire_reason` IS NOT NEW.`retire_reason`)
  OR (OLD.`withdrawn_by` IS NOT NULL AND OLD.`withdrawn_by` IS NOT NEW.`withdrawn_by`)
  OR (OLD.`withdrawn_at` IS NOT NULL AND OLD.`withdrawn_at` IS NOT NEW.`withdrawn_at`)
  OR (OLD.`withdraw_reason` IS NOT NULL AND OLD.`withdraw_reason` IS NOT NEW.`withdraw_reason`)
BEGIN
  SELECT RAISE(ABORT, 'nkledger: approval, retirement and withdrawal records are written once');
END;
--> statement-breakpoint
CREATE TRIGGER `material_versions_no_delete`
BEFORE DELETE ON `material_versions`
BEGIN
  SELECT RAISE(ABORT, 'nkledger: versions are never deleted (retire or withdraw instead)');
END;
--> statement-breakpoint
CREATE TRIGGER `materials_no_delete`
BEFORE DELETE ON `materials`
BEGIN
  SELECT RAISE(ABORT, 'nkledger: materials are never deleted');
END;
--> statement-breakpoint
CREATE TRIGGER `materials_identity_immutable`
BEFORE UPDATE ON `materials`
WHEN OLD.`id` IS NOT NEW.`id` OR OLD.`slug` IS NOT NEW.`slug`
  OR OLD.`created_by` IS NOT NEW.`created_by` OR OLD.`created_at` IS NOT NEW.`created_at`
  OR NEW.`last_version` < OLD.`last_version`
BEGIN
  SELECT RAISE(ABORT, 'nkledger: a material''s slug and creation record never change, and version numbers are never reused');
END;
--> statement-breakpoint
CREATE TRIGGER `audit_log_no_update`
BEFORE UPDATE ON `audit_log`
BEGIN
  SELECT RAISE(ABORT, 'nkledger: the audit log is append-only');
END;
--> statement-breakpoint
CREATE TRIGGER `audit_log_no_delete`
BEFORE DELETE ON `audit_log`
BEGIN
  SELECT RAISE(ABORT, 'nkledger: the audit log is append-only');
END;
