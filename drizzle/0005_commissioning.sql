CREATE TABLE `attachments` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`owner_kind` text NOT NULL,
	`owner_id` integer NOT NULL,
	`storage_key` text NOT NULL,
	`file_name` text NOT NULL,
	`content_type` text NOT NULL,
	`bytes` integer NOT NULL,
	`sha256` text NOT NULL,
	`caption` text,
	`uploaded_by` integer NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`uploaded_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `attachments_storage_key_unique` ON `attachments` (`storage_key`);--> statement-breakpoint
CREATE INDEX `attachments_owner_idx` ON `attachments` (`owner_kind`,`owner_id`);--> statement-breakpoint
CREATE TABLE `commissionings` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`system_id` integer NOT NULL,
	`certificate_no` text,
	`overall` text NOT NULL,
	`technician_user_id` integer NOT NULL,
	`technician_name` text NOT NULL,
	`licence_number` text NOT NULL,
	`measurements` text NOT NULL,
	`items` text NOT NULL,
	`handover_name` text,
	`commissioned_on` text NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`system_id`) REFERENCES `systems`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`technician_user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `commissionings_certificate_no_unique` ON `commissionings` (`certificate_no`);--> statement-breakpoint
CREATE INDEX `commissionings_system_idx` ON `commissionings` (`system_id`);