ALTER TABLE `material_versions` ADD `preamble` text;--> statement-breakpoint
ALTER TABLE `material_versions` ADD `absent_columns` text;
--> statement-breakpoint
-- Hand-written: the immutability trigger of 0001 extended to the two new provenance columns.
DROP TRIGGER `material_versions_content_immutable`;
--> statement-breakpoint
CREATE TRIGGER `material_versions_content_immutable`
BEFORE UPDATE ON `material_versions`
WHEN OLD.`content` IS NOT NEW.`content` OR OLD.`sha256` IS NOT NEW.`sha256`
  OR OLD.`material_id` IS NOT NEW.`material_id` OR OLD.`number` IS NOT NEW.`number`
  OR OLD.`sample` IS NOT NEW.`sample` OR OLD.`substrate` IS NOT NEW.`substrate`
  OR OLD.`process` IS NOT NEW.`process` OR OLD.`instrument` IS NOT NEW.`instrument`
  OR OLD.`method` IS NOT NEW.`method` OR OLD.`angles_deg` IS NOT NEW.`angles_deg`
  OR OLD.`measured_on` IS NOT NEW.`measured_on` OR OLD.`operator` IS NOT NEW.`operator`
  OR OLD.`source_file` IS NOT NEW.`source_file` OR OLD.`source_sha256` IS NOT NEW.`source_sha256`
  OR OLD.`notes` IS NOT NEW.`notes`
  OR OLD.`preamble` IS NOT NEW.`preamble` OR OLD.`absent_columns` IS NOT NEW.`absent_columns` OR OLD.`created_by` IS NOT NEW.`created_by`
  OR OLD.`created_at` IS NOT NEW.`created_at` OR OLD.`id` IS NOT NEW.`id`
BEGIN
  SELECT RAISE(ABORT, 'nkledger: version content, provenance and identity are immutable (a correction is a new version)');
END;
