ALTER TABLE `organisations` ADD `time_zone` text DEFAULT 'UTC' NOT NULL;--> statement-breakpoint
ALTER TABLE `organisations` ADD `locale` text DEFAULT 'en-GB' NOT NULL;