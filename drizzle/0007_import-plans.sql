ALTER TABLE `import_files` ADD `plan_rows` text;--> statement-breakpoint
ALTER TABLE `import_files` ADD `plan_states` text;