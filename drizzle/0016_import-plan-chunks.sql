CREATE TABLE `import_plan_chunks` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`plan_key` text NOT NULL,
	`import_id` integer,
	`seq` integer NOT NULL,
	`rows` text NOT NULL,
	`states` text NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`import_id`) REFERENCES `imports`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `import_plan_chunks_import_idx` ON `import_plan_chunks` (`import_id`,`seq`);--> statement-breakpoint
CREATE INDEX `import_plan_chunks_key_idx` ON `import_plan_chunks` (`plan_key`);