CREATE TABLE `api_tokens` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`name` text NOT NULL,
	`token_hash` text NOT NULL,
	`prefix` text NOT NULL,
	`scope` text NOT NULL,
	`created_by` integer NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	`last_used_at` integer,
	`revoked_at` integer,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `api_tokens_token_hash_unique` ON `api_tokens` (`token_hash`);--> statement-breakpoint
CREATE TABLE `factory_tests` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`module_id` integer NOT NULL,
	`import_id` integer,
	`row_key` text NOT NULL,
	`tested_at` integer NOT NULL,
	`capacity_ah` real NOT NULL,
	`energy_wh` real,
	`dcir_mohm` real NOT NULL,
	`dcir_source` text NOT NULL,
	`ocv_v` real,
	`cell_spread_mv` real NOT NULL,
	`insulation_mohm` real NOT NULL,
	`ambient_c` real,
	`rig` text,
	`operator` text,
	`outcome` text NOT NULL,
	`failures` text NOT NULL,
	FOREIGN KEY (`module_id`) REFERENCES `modules`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`import_id`) REFERENCES `imports`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `factory_tests_row_key_unique` ON `factory_tests` (`row_key`);--> statement-breakpoint
CREATE INDEX `factory_tests_module_idx` ON `factory_tests` (`module_id`,`tested_at`);--> statement-breakpoint
CREATE INDEX `factory_tests_import_idx` ON `factory_tests` (`import_id`);--> statement-breakpoint
CREATE INDEX `factory_tests_time_idx` ON `factory_tests` (`tested_at`);--> statement-breakpoint
CREATE TABLE `import_files` (
	`import_id` integer PRIMARY KEY NOT NULL,
	`content` text NOT NULL,
	FOREIGN KEY (`import_id`) REFERENCES `imports`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `imports` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`kind` text NOT NULL,
	`sha256` text NOT NULL,
	`file_name` text NOT NULL,
	`bytes` integer NOT NULL,
	`uploaded_by` integer,
	`token_id` integer,
	`uploader_label` text NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	`status` text NOT NULL,
	`rows_total` integer NOT NULL,
	`accepted` integer NOT NULL,
	`rejected` integer NOT NULL,
	`duplicates` integer NOT NULL,
	`passed` integer,
	`failed` integer,
	`errors` text NOT NULL,
	`committed_at` integer,
	FOREIGN KEY (`uploaded_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`token_id`) REFERENCES `api_tokens`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `imports_sha_idx` ON `imports` (`kind`,`sha256`);