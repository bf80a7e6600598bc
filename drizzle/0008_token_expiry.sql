ALTER TABLE `api_tokens` ADD `expires_at` text;--> statement-breakpoint
ALTER TABLE `api_tokens` ADD `last_used_at` text;