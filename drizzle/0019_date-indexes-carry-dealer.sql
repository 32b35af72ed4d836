DROP INDEX `modules_built_state_idx`;--> statement-breakpoint
DROP INDEX `modules_tested_state_idx`;--> statement-breakpoint
DROP INDEX `modules_shipped_state_idx`;--> statement-breakpoint
CREATE INDEX `modules_built_state_idx` ON `modules` (`built_at`,`id`,`state`,`dealer_org_id`);--> statement-breakpoint
CREATE INDEX `modules_tested_state_idx` ON `modules` (`tested_at`,`id`,`state`,`dealer_org_id`);--> statement-breakpoint
CREATE INDEX `modules_shipped_state_idx` ON `modules` (`shipped_at`,`id`,`state`,`dealer_org_id`);