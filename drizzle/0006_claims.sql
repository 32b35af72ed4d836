CREATE TABLE `claim_events` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`claim_id` integer NOT NULL,
	`at` integer NOT NULL,
	`actor_user_id` integer,
	`actor_label` text NOT NULL,
	`from_state` text,
	`to_state` text NOT NULL,
	`comment` text,
	FOREIGN KEY (`claim_id`) REFERENCES `claims`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`actor_user_id`) REFERENCES `users`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `claim_events_claim_idx` ON `claim_events` (`claim_id`);--> statement-breakpoint
CREATE TABLE `claim_modules` (
	`claim_id` integer NOT NULL,
	`module_id` integer NOT NULL,
	`replacement_module_id` integer,
	`return_findings` text,
	`return_cause` text,
	PRIMARY KEY(`claim_id`, `module_id`),
	FOREIGN KEY (`claim_id`) REFERENCES `claims`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`module_id`) REFERENCES `modules`(`id`) ON UPDATE no action ON DELETE no action,
	FOREIGN KEY (`replacement_module_id`) REFERENCES `modules`(`id`) ON UPDATE no action ON DELETE no action
);
--> statement-breakpoint
CREATE INDEX `claim_modules_module_idx` ON `claim_modules` (`module_id`);--> statement-breakpoint
CREATE TABLE `claims` (
	`id` integer PRIMARY KEY AUTOINCREMENT NOT NULL,
	`reference` text NOT NULL,
	`system_id` integer NOT NULL,
	`dealer_org_id` integer,
	`state` text DEFAULT 'filed' NOT NULL,
	`fault` text NOT NULL,
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
CREATE UNIQUE INDEX `claims_reference_unique` ON `claims` (`reference`);--> statement-breakpoint
CREATE INDEX `claims_state_idx` ON `claims` (`state`);--> statement-breakpoint
CREATE INDEX `claims_dealer_idx` ON `claims` (`dealer_org_id`);--> statement-breakpoint
CREATE TABLE `log_mappings` (
	`dealer_org_id` integer PRIMARY KEY NOT NULL,
	`mapping` text NOT NULL,
	`updated_at` integer NOT NULL,
	FOREIGN KEY (`dealer_org_id`) REFERENCES `organisations`(`id`) ON UPDATE no action ON DELETE no action
);
