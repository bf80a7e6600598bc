ALTER TABLE `audit_log` ADD `material` text;--> statement-breakpoint
ALTER TABLE `audit_log` ADD `version_number` integer;--> statement-breakpoint
ALTER TABLE `audit_log` ADD `content_sha256` text;--> statement-breakpoint
ALTER TABLE `audit_log` ADD `status_from` text;--> statement-breakpoint
ALTER TABLE `audit_log` ADD `status_to` text;--> statement-breakpoint
ALTER TABLE `audit_log` ADD `prev_hash` text;--> statement-breakpoint
ALTER TABLE `audit_log` ADD `hash` text;--> statement-breakpoint
CREATE UNIQUE INDEX `audit_log_hash` ON `audit_log` (`hash`);--> statement-breakpoint
CREATE UNIQUE INDEX `audit_log_prev_hash` ON `audit_log` (`prev_hash`);