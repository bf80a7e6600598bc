CREATE TABLE `audit_log` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`at` text NOT NULL,
	`actor` text NOT NULL,
	`action` text NOT NULL,
	`material_id` integer,
	`version_id` integer,
	`detail` text DEFAULT '{}' NOT NULL,
	FOREIGN KEY (`material_id`) REFERENCES `materials`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`version_id`) REFERENCES `material_versions`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `audit_log_material` ON `audit_log` (`material_id`);--> statement-breakpoint
CREATE TABLE `material_versions` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`material_id` integer NOT NULL,
	`number` integer NOT NULL,
	`status` text DEFAULT 'draft' NOT NULL,
	`content` text NOT NULL,
	`sha256` text NOT NULL,
	`sample` text,
	`substrate` text,
	`process` text,
	`instrument` text,
	`method` text,
	`angles_deg` text,
	`measured_on` text,
	`operator` text,
	`source_file` text,
	`source_sha256` text,
	`notes` text,
	`created_by` text NOT NULL,
	`created_at` text NOT NULL,
	`approved_by` text,
	`approved_at` text,
	`self_approved` integer,
	`retired_by` text,
	`retired_at` text,
	`retire_reason` text,
	`withdrawn_by` text,
	`withdrawn_at` text,
	`withdraw_reason` text,
	FOREIGN KEY (`material_id`) REFERENCES `materials`(`id`) ON UPDATE no action ON DELETE no action,
	CONSTRAINT "material_versions_status" CHECK("material_versions"."status" IN ('draft', 'approved', 'retired', 'withdrawn')),
	CONSTRAINT "material_versions_number" CHECK("material_versions"."number" >= 1)
);
--> statement-breakpoint
CREATE UNIQUE INDEX `material_versions_material_number` ON `material_versions` (`material_id`,`number`);--> statement-breakpoint
CREATE INDEX `material_versions_sha256` ON `material_versions` (`sha256`);--> statement-breakpoint
CREATE TABLE `materials` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`slug` text NOT NULL,
	`name` text NOT NULL,
	`description` text DEFAULT '' NOT NULL,
	`tags` text DEFAULT '[]' NOT NULL,
	`created_by` text NOT NULL,
	`created_at` text NOT NULL,
	`last_version` integer DEFAULT 0 NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `materials_slug_unique` ON `materials` (`slug`);--> statement-breakpoint
CREATE TABLE `registry_settings` (
	`key` text PRIMARY KEY NOT NULL,
	`value` text NOT NULL,
	`updated_by` text NOT NULL,
	`updated_at` text NOT NULL
);
