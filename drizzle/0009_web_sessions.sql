CREATE TABLE `web_pending_uploads` (
	`id` text PRIMARY KEY NOT NULL,
	`session_sha256` text NOT NULL,
	`slug` text NOT NULL,
	`file_name` text NOT NULL,
	`bytes` blob NOT NULL,
	`import_options` text NOT NULL,
	`created_at` text NOT NULL,
	FOREIGN KEY (`session_sha256`) REFERENCES `web_sessions`(`id_sha256`) ON UPDATE no action ON DELETE cascade
);
--> statement-breakpoint
CREATE TABLE `web_sessions` (
	`id_sha256` text PRIMARY KEY NOT NULL,
	`token_id` text NOT NULL,
	`csrf` text NOT NULL,
	`created_at` text NOT NULL,
	`expires_at` text NOT NULL,
	FOREIGN KEY (`token_id`) REFERENCES `api_tokens`(`id`) ON UPDATE no action ON DELETE no action
);
