CREATE TABLE `shipment_items` (
	`shipment_id` integer NOT NULL,
	`module_id` integer NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	PRIMARY KEY(`shipment_id`, `module_id`),
	FOREIGN KEY (`shipment_id`) REFERENCES `shipments`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`module_id`) REFERENCES `modules`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `shipment_items_module_idx` ON `shipment_items` (`module_id`);--> statement-breakpoint
CREATE TABLE `shipments` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`reference` text NOT NULL,
	`dealer_org_id` integer NOT NULL,
	`status` text DEFAULT 'draft' NOT NULL,
	`note` text,
	`created_by` integer NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	`dispatched_at` integer,
	`dispatched_by` integer,
	FOREIGN KEY (`dealer_org_id`) REFERENCES `organisations`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`dispatched_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `shipments_reference_unique` ON `shipments` (`reference`);--> statement-breakpoint
CREATE INDEX `shipments_dealer_idx` ON `shipments` (`dealer_org_id`);--> statement-breakpoint
CREATE TABLE `sites` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`dealer_org_id` integer,
	`name` text NOT NULL,
	`owner_name` text NOT NULL,
	`owner_contact` text NOT NULL,
	`address` text NOT NULL,
	`application` text NOT NULL,
	`created_by` integer NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`dealer_org_id`) REFERENCES `organisations`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `sites_dealer_idx` ON `sites` (`dealer_org_id`);--> statement-breakpoint
CREATE TABLE `system_slots` (
	`system_id` integer NOT NULL,
	`string_no` integer NOT NULL,
	`position` integer NOT NULL,
	`module_id` integer NOT NULL,
	PRIMARY KEY(`system_id`, `string_no`, `position`),
	FOREIGN KEY (`system_id`) REFERENCES `systems`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`module_id`) REFERENCES `modules`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `system_slots_module_idx` ON `system_slots` (`module_id`);--> statement-breakpoint
CREATE TABLE `systems` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`site_id` integer NOT NULL,
	`name` text NOT NULL,
	`model_id` integer NOT NULL,
	`series` integer NOT NULL,
	`parallel` integer NOT NULL,
	`inverter_name` text,
	`inverter_min_v` real NOT NULL,
	`inverter_max_v` real NOT NULL,
	`preferred_min_v` real,
	`preferred_max_v` real,
	`max_charge_a` real,
	`max_discharge_a` real,
	`status` text DEFAULT 'planned' NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`site_id`) REFERENCES `sites`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`model_id`) REFERENCES `module_models`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `systems_site_idx` ON `systems` (`site_id`);--> statement-breakpoint
CREATE TABLE `user_prefs` (
	`user_id` integer NOT NULL,
	`key` text NOT NULL,
	`value` text NOT NULL,
	PRIMARY KEY(`user_id`, `key`),
	FOREIGN KEY (`user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
ALTER TABLE `modules` ADD `system_id` integer;--> statement-breakpoint
CREATE INDEX `modules_tested_idx` ON `modules` (`tested_at`);--> statement-breakpoint
CREATE INDEX `modules_shipped_idx` ON `modules` (`shipped_at`);--> statement-breakpoint
CREATE INDEX `modules_system_idx` ON `modules` (`system_id`);--> statement-breakpoint
CREATE INDEX `modules_dealer_state_idx` ON `modules` (`dealer_org_id`,`state`);