CREATE TABLE `campaign_modules` (
	`campaign_id` integer NOT NULL,
	`module_id` integer NOT NULL,
	`dealer_org_id` integer,
	`state` text DEFAULT 'notified' NOT NULL,
	`outcome` text,
	`note` text,
	`notified_at` integer NOT NULL,
	`last_step_at` integer NOT NULL,
	`last_step_by` text NOT NULL,
	`last_reminder_at` integer,
	PRIMARY KEY(`campaign_id`, `module_id`),
	FOREIGN KEY (`campaign_id`) REFERENCES `campaigns`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`module_id`) REFERENCES `modules`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`dealer_org_id`) REFERENCES `organisations`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `campaign_modules_dealer_idx` ON `campaign_modules` (`campaign_id`,`dealer_org_id`);--> statement-breakpoint
CREATE INDEX `campaign_modules_module_idx` ON `campaign_modules` (`module_id`);--> statement-breakpoint
CREATE TABLE `campaign_steps` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`campaign_id` integer NOT NULL,
	`module_id` integer NOT NULL,
	`action` text NOT NULL,
	`outcome` text,
	`note` text,
	`actor_user_id` integer,
	`actor_label` text NOT NULL,
	`at` integer NOT NULL,
	FOREIGN KEY (`campaign_id`) REFERENCES `campaigns`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`module_id`) REFERENCES `modules`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`actor_user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `campaign_steps_item_idx` ON `campaign_steps` (`campaign_id`,`module_id`);--> statement-breakpoint
CREATE TABLE `campaigns` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`reference` text NOT NULL,
	`title` text NOT NULL,
	`notice` text NOT NULL,
	`remedy` text NOT NULL,
	`selection` text NOT NULL,
	`reminder_days` integer DEFAULT 14 NOT NULL,
	`created_by` integer NOT NULL,
	`created_at` integer DEFAULT (unixepoch('subsec') * 1000) NOT NULL,
	`closed_at` integer,
	FOREIGN KEY (`created_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE UNIQUE INDEX `campaigns_reference_unique` ON `campaigns` (`reference`);--> statement-breakpoint
PRAGMA foreign_keys=OFF;--> statement-breakpoint
CREATE TABLE `__new_claims` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`reference` text NOT NULL,
	`kind` text DEFAULT 'in-service' NOT NULL,
	`system_id` integer,
	`dealer_org_id` integer,
	`state` text DEFAULT 'filed' NOT NULL,
	`fault` text NOT NULL,
	`fault_code` text,
	`observed_on` text,
	`evidence_request` text,
	`evidence_requested_at` integer,
	`evidence` text NOT NULL,
	`assessment` text,
	`decision` text,
	`decision_reason` text,
	`decided_by` integer,
	`decided_at` integer,
	`filed_by` integer NOT NULL,
	`filed_at` integer NOT NULL,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`system_id`) REFERENCES `systems`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`dealer_org_id`) REFERENCES `organisations`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`decided_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`filed_by`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
INSERT INTO `__new_claims`("id", "reference", "kind", "system_id", "dealer_org_id", "state", "fault", "evidence", "assessment", "decision", "decision_reason", "decided_by", "decided_at", "filed_by", "filed_at", "updated_at") SELECT "id", "reference", 'in-service', "system_id", "dealer_org_id", "state", "fault", "evidence", "assessment", "decision", "decision_reason", "decided_by", "decided_at", "filed_by", "filed_at", "updated_at" FROM `claims`;--> statement-breakpoint
DROP TABLE `claims`;--> statement-breakpoint
ALTER TABLE `__new_claims` RENAME TO `claims`;--> statement-breakpoint
PRAGMA foreign_keys=ON;--> statement-breakpoint
CREATE UNIQUE INDEX `claims_reference_unique` ON `claims` (`reference`);--> statement-breakpoint
CREATE INDEX `claims_state_idx` ON `claims` (`state`);--> statement-breakpoint
CREATE INDEX `claims_dealer_idx` ON `claims` (`dealer_org_id`);--> statement-breakpoint
ALTER TABLE `claim_modules` ADD `ra_number` text;--> statement-breakpoint
ALTER TABLE `claim_modules` ADD `received_at` integer;--> statement-breakpoint
ALTER TABLE `claim_modules` ADD `received_by` integer REFERENCES users(id);--> statement-breakpoint
ALTER TABLE `claim_modules` ADD `arrival_condition` text;--> statement-breakpoint
ALTER TABLE `claim_modules` ADD `inspected_at` integer;--> statement-breakpoint
ALTER TABLE `claim_modules` ADD `inspected_by` integer REFERENCES users(id);--> statement-breakpoint
ALTER TABLE `claim_modules` ADD `return_outcome` text;--> statement-breakpoint
ALTER TABLE `claim_modules` ADD `return_outcome_at` integer;--> statement-breakpoint
CREATE UNIQUE INDEX `claim_modules_ra_number_unique` ON `claim_modules` (`ra_number`);--> statement-breakpoint
ALTER TABLE `modules` ADD `lifecycle_status` text;--> statement-breakpoint
ALTER TABLE `modules` ADD `scrap_reason` text;--> statement-breakpoint
ALTER TABLE `modules` ADD `scrapped_at` integer;