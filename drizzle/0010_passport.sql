CREATE TABLE `model_passport_items` (
	`model_id` integer NOT NULL,
	`item_key` text NOT NULL,
	`value` text NOT NULL,
	`unit` text,
	`updated_at` integer NOT NULL,
	`updated_by` integer,
	PRIMARY KEY(`model_id`, `item_key`),
	FOREIGN KEY (`model_id`) REFERENCES `module_models`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`updated_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `passport_grants` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`token_hash` text NOT NULL,
	`prefix` text NOT NULL,
	`party_kind` text NOT NULL,
	`party_name` text NOT NULL,
	`scope_kind` text NOT NULL,
	`scope_value` text NOT NULL,
	`expires_at` integer NOT NULL,
	`created_by` integer NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	`revoked_at` integer,
	`last_used_at` integer,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `passport_grants_token_hash_unique` ON `passport_grants` (`token_hash`);--> statement-breakpoint
CREATE INDEX `passport_grants_scope_idx` ON `passport_grants` (`scope_kind`,`scope_value`);