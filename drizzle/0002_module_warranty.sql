ALTER TABLE `modules` ADD `warranty_starts_on` text;--> statement-breakpoint
ALTER TABLE `modules` ADD `warranty_ends_on` text;--> statement-breakpoint
ALTER TABLE `modules` ADD `warranty_terms` text;