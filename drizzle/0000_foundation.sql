CREATE TABLE `allocations` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`model_id` integer NOT NULL,
	`first_serial` text NOT NULL,
	`last_serial` text NOT NULL,
	`count` integer NOT NULL,
	`created_by` integer NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`model_id`) REFERENCES `module_models`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE TABLE `audit_log` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`at` integer NOT NULL,
	`actor_user_id` integer,
	`actor_label` text NOT NULL,
	`action` text NOT NULL,
	`entity` text NOT NULL,
	`entity_id` text NOT NULL,
	`before` text,
	`after` text
);
--> statement-breakpoint
CREATE INDEX `audit_entity_idx` ON `audit_log` (`entity`,`entity_id`);--> statement-breakpoint
CREATE TABLE `mail_outbox` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`at` integer NOT NULL,
	`from_addr` text NOT NULL,
	`to_addr` text NOT NULL,
	`subject` text NOT NULL,
	`text` text NOT NULL,
	`transport` text NOT NULL
);
--> statement-breakpoint
CREATE TABLE `module_cell_lots` (
	`module_id` integer NOT NULL,
	`lot_code` text NOT NULL,
	PRIMARY KEY(`module_id`, `lot_code`),
	FOREIGN KEY (`module_id`) REFERENCES `modules`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `cell_lots_lot_idx` ON `module_cell_lots` (`lot_code`);--> statement-breakpoint
CREATE TABLE `module_events` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`module_id` integer NOT NULL,
	`kind` text NOT NULL,
	`at` integer NOT NULL,
	`actor_user_id` integer,
	`actor_label` text NOT NULL,
	`summary` text NOT NULL,
	`detail` text,
	FOREIGN KEY (`module_id`) REFERENCES `modules`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`actor_user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `module_events_module_idx` ON `module_events` (`module_id`,`at`);--> statement-breakpoint
CREATE TABLE `module_models` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`code` text NOT NULL,
	`name` text NOT NULL,
	`variant` text NOT NULL,
	`cells_series` integer NOT NULL,
	`cell_min_v` real NOT NULL,
	`cell_nominal_v` real NOT NULL,
	`cell_max_v` real NOT NULL,
	`rated_ah` real NOT NULL,
	`usable_wh` real NOT NULL,
	`max_continuous_c` real NOT NULL,
	`burst_c` real NOT NULL,
	`burst_seconds` integer NOT NULL,
	`charge_temp_min_c` real NOT NULL,
	`charge_temp_max_c` real NOT NULL,
	`discharge_temp_min_c` real NOT NULL,
	`discharge_temp_max_c` real NOT NULL,
	`mass_kg` real NOT NULL,
	`gtin` text,
	`min_capacity_ah` real NOT NULL,
	`max_dcir_mohm` real NOT NULL,
	`max_cell_spread_mv` real NOT NULL,
	`min_insulation_mohm` real NOT NULL,
	`warranty_years` integer NOT NULL,
	`rated_cycles` integer NOT NULL,
	`reference_temp_c` real NOT NULL,
	`end_retention_pct` real NOT NULL,
	`hot_temp_c` real NOT NULL,
	`hot_rated_cycles` integer NOT NULL,
	`retired_at` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `module_models_code_unique` ON `module_models` (`code`);--> statement-breakpoint
CREATE TABLE `modules` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`serial` text NOT NULL,
	`model_id` integer NOT NULL,
	`allocation_id` integer,
	`state` text DEFAULT 'allocated' NOT NULL,
	`dealer_org_id` integer,
	`built_at` integer,
	`built_by` integer,
	`cell_lots` text,
	`build_checks` text,
	`build_notes` text,
	`test_outcome` text,
	`tested_at` integer,
	`shipped_at` integer,
	`commissioned_at` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	`updated_at` integer,
	FOREIGN KEY (`model_id`) REFERENCES `module_models`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`allocation_id`) REFERENCES `allocations`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`dealer_org_id`) REFERENCES `organisations`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`built_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `modules_serial_unique` ON `modules` (`serial`);--> statement-breakpoint
CREATE INDEX `modules_state_idx` ON `modules` (`state`);--> statement-breakpoint
CREATE INDEX `modules_model_idx` ON `modules` (`model_id`);--> statement-breakpoint
CREATE INDEX `modules_dealer_idx` ON `modules` (`dealer_org_id`);--> statement-breakpoint
CREATE INDEX `modules_built_idx` ON `modules` (`built_at`);--> statement-breakpoint
CREATE TABLE `organisations` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`kind` text NOT NULL,
	`name` text NOT NULL,
	`contact_email` text,
	`region` text,
	`active` integer DEFAULT true NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL
);
--> statement-breakpoint
CREATE UNIQUE INDEX `organisations_name_unique` ON `organisations` (`name`);--> statement-breakpoint
CREATE TABLE `serial_counters` (
	`variant` text NOT NULL,
	`year` integer NOT NULL,
	`next` integer NOT NULL,
	PRIMARY KEY(`variant`, `year`)
);
--> statement-breakpoint
CREATE TABLE `user_tokens` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`user_id` integer NOT NULL,
	`purpose` text NOT NULL,
	`token_hash` text NOT NULL,
	`expires_at` integer NOT NULL,
	`used_at` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `user_tokens_token_hash_unique` ON `user_tokens` (`token_hash`);--> statement-breakpoint
CREATE TABLE `users` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`email` text NOT NULL,
	`name` text NOT NULL,
	`role` text NOT NULL,
	`organisation_id` integer NOT NULL,
	`password_hash` text,
	`active` integer DEFAULT true NOT NULL,
	`last_sign_in_at` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`organisation_id`) REFERENCES `organisations`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `users_email_unique` ON `users` (`email`);