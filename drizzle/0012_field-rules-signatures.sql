CREATE TABLE `commissioning_rule_sets` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`market` text NOT NULL,
	`name` text NOT NULL,
	`version` integer NOT NULL,
	`effective_from` text NOT NULL,
	`limits` text NOT NULL,
	`citations` text NOT NULL,
	`created_by` integer,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `rule_sets_market_version_uq` ON `commissioning_rule_sets` (`market`,`version`);--> statement-breakpoint
ALTER TABLE `commissionings` ADD `rule_set_id` integer REFERENCES commissioning_rule_sets(id);--> statement-breakpoint
ALTER TABLE `commissionings` ADD `rule_set_version` integer;--> statement-breakpoint
ALTER TABLE `commissionings` ADD `technician_signature` text;--> statement-breakpoint
ALTER TABLE `commissionings` ADD `owner_signature` text;--> statement-breakpoint
ALTER TABLE `commissionings` ADD `content_hash` text;--> statement-breakpoint
ALTER TABLE `module_models` ADD `internal_resistance_mohm` real;--> statement-breakpoint
ALTER TABLE `organisations` ADD `market` text;--> statement-breakpoint
-- A rule set version is never rewritten: commissionings refer to it for decades; an edit adds a version.
CREATE TRIGGER commissioning_rule_sets_no_update BEFORE UPDATE ON commissioning_rule_sets
BEGIN SELECT RAISE(ABORT, 'commissioning_rule_sets is append-only: add a new version'); END;
--> statement-breakpoint
CREATE TRIGGER commissioning_rule_sets_no_delete BEFORE DELETE ON commissioning_rule_sets
BEGIN SELECT RAISE(ABORT, 'commissioning_rule_sets is append-only: add a new version'); END;
--> statement-breakpoint
CREATE TRIGGER commissioning_rule_sets_no_replace BEFORE INSERT ON commissioning_rule_sets
WHEN EXISTS (SELECT 1 FROM commissioning_rule_sets WHERE id = NEW.id) OR EXISTS (SELECT 1 FROM commissioning_rule_sets WHERE market = NEW.market AND version = NEW.version)
BEGIN SELECT RAISE(ABORT, 'commissioning_rule_sets is append-only: this version already exists'); END;
