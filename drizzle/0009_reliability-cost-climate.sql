ALTER TABLE `module_models` ADD `replacement_cost` real;--> statement-breakpoint
ALTER TABLE `sites` ADD `climate_band` text;