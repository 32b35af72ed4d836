CREATE TABLE `module_qr_codes` (
	`module_id` integer PRIMARY KEY NOT NULL,
	`payload` text NOT NULL,
	`svg` text NOT NULL,
	FOREIGN KEY (`module_id`) REFERENCES `modules`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
ALTER TABLE `import_files` ADD `plan_rows` text;--> statement-breakpoint
ALTER TABLE `import_files` ADD `plan_states` text;--> statement-breakpoint
CREATE INDEX `modules_state_model_serial_idx` ON `modules` (`state`,`model_id`,`serial`);