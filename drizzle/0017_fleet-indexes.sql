DROP INDEX `factory_tests_import_idx`;--> statement-breakpoint
CREATE INDEX `factory_tests_import_module_idx` ON `factory_tests` (`import_id`,`module_id`);--> statement-breakpoint
DROP INDEX `cell_lots_lot_idx`;--> statement-breakpoint
CREATE INDEX `cell_lots_lot_module_idx` ON `module_cell_lots` (`lot_code`,`module_id`);--> statement-breakpoint
DROP INDEX `modules_built_idx`;--> statement-breakpoint
DROP INDEX `modules_tested_idx`;--> statement-breakpoint
DROP INDEX `modules_shipped_idx`;--> statement-breakpoint
CREATE INDEX `modules_built_state_idx` ON `modules` (`built_at`,`id`,`state`);--> statement-breakpoint
CREATE INDEX `modules_tested_state_idx` ON `modules` (`tested_at`,`id`,`state`);--> statement-breakpoint
CREATE INDEX `modules_shipped_state_idx` ON `modules` (`shipped_at`,`id`,`state`);--> statement-breakpoint
-- Text inside a serial, found through trigrams (FTS5 trigram tokenizer, sqlite.org/fts5.html):
-- `serial LIKE '%…%'` on this table reads its index instead of every serial. Kept by triggers.
CREATE VIRTUAL TABLE `module_serial_search` USING fts5(serial, tokenize = 'trigram', detail = 'none');--> statement-breakpoint
INSERT INTO `module_serial_search` (rowid, serial) SELECT id, serial FROM `modules`;--> statement-breakpoint
CREATE TRIGGER `modules_serial_search_insert` AFTER INSERT ON `modules`
BEGIN INSERT INTO `module_serial_search` (rowid, serial) VALUES (NEW.id, NEW.serial); END;--> statement-breakpoint
CREATE TRIGGER `modules_serial_search_update` AFTER UPDATE OF serial ON `modules`
BEGIN UPDATE `module_serial_search` SET serial = NEW.serial WHERE rowid = NEW.id; END;--> statement-breakpoint
CREATE TRIGGER `modules_serial_search_delete` AFTER DELETE ON `modules`
BEGIN DELETE FROM `module_serial_search` WHERE rowid = OLD.id; END;
