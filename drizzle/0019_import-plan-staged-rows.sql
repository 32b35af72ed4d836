CREATE TABLE `import_plan_rows` (
	`id` integer PRIMARY KEY NOT NULL,
	`module_id` integer,
	`row_key` text,
	`tested_at` integer,
	`capacity_ah` real,
	`energy_wh` real,
	`dcir_mohm` real,
	`dcir_source` text,
	`ocv_v` real,
	`cell_spread_mv` real,
	`insulation_mohm` real,
	`ambient_c` real,
	`rig` text,
	`operator` text,
	`outcome` text,
	`failures` text
);
--> statement-breakpoint
CREATE TABLE `import_plan_states` (
	`id` integer PRIMARY KEY NOT NULL,
	`module_id` integer,
	`outcome` text,
	`tested_at` integer
);
--> statement-breakpoint
CREATE TRIGGER `import_plan_chunks_drop_staged` AFTER DELETE ON `import_plan_chunks`
BEGIN
	DELETE FROM `import_plan_rows` WHERE `id` BETWEEN OLD.id * 1048576 AND OLD.id * 1048576 + 1048575;
	DELETE FROM `import_plan_states` WHERE `id` BETWEEN OLD.id * 1048576 AND OLD.id * 1048576 + 1048575;
END;
