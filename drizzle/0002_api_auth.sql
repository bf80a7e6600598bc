CREATE TABLE `api_settings` (
	`key` text PRIMARY KEY NOT NULL,
	`value_json` text NOT NULL,
	`updated_at` text NOT NULL,
	`updated_by` text NOT NULL
);
--> statement-breakpoint
CREATE TABLE `api_tokens` (
	`id` text PRIMARY KEY NOT NULL,
	`user` text NOT NULL,
	`role` text NOT NULL,
	`token_sha256` text NOT NULL,
	`created_at` text NOT NULL,
	`created_by` text NOT NULL,
	`revoked_at` text,
	`revoked_by` text
);
--> statement-breakpoint
CREATE UNIQUE INDEX `api_tokens_token_sha256_unique` ON `api_tokens` (`token_sha256`);