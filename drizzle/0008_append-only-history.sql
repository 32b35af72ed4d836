-- History tables are append-only. UPDATE and DELETE are refused by triggers; REPLACE,
-- INSERT OR REPLACE and an upsert of an existing row are refused by a BEFORE INSERT trigger
-- (SQLite's REPLACE deletes the old row without firing delete triggers, so that trigger alone
-- would not see it). https://www.sqlite.org/lang_conflict.html, https://www.sqlite.org/lang_createtrigger.html
CREATE TRIGGER audit_log_no_replace BEFORE INSERT ON audit_log
WHEN EXISTS (SELECT 1 FROM audit_log WHERE id = NEW.id)
BEGIN SELECT RAISE(ABORT, 'audit_log is append-only: a row with this id already exists'); END;
--> statement-breakpoint
CREATE TRIGGER module_events_no_replace BEFORE INSERT ON module_events
WHEN EXISTS (SELECT 1 FROM module_events WHERE id = NEW.id)
BEGIN SELECT RAISE(ABORT, 'module_events is append-only: a row with this id already exists'); END;
--> statement-breakpoint
CREATE TRIGGER claim_events_no_replace BEFORE INSERT ON claim_events
WHEN EXISTS (SELECT 1 FROM claim_events WHERE id = NEW.id)
BEGIN SELECT RAISE(ABORT, 'claim_events is append-only: a row with this id already exists'); END;
--> statement-breakpoint
CREATE TRIGGER claim_events_no_update BEFORE UPDATE ON claim_events
BEGIN SELECT RAISE(ABORT, 'claim_events is append-only'); END;
--> statement-breakpoint
CREATE TRIGGER claim_events_no_delete BEFORE DELETE ON claim_events
BEGIN SELECT RAISE(ABORT, 'claim_events is append-only'); END;
--> statement-breakpoint
CREATE TRIGGER factory_tests_no_replace BEFORE INSERT ON factory_tests
WHEN EXISTS (SELECT 1 FROM factory_tests WHERE id = NEW.id) OR EXISTS (SELECT 1 FROM factory_tests WHERE row_key = NEW.row_key)
BEGIN SELECT RAISE(ABORT, 'factory_tests is append-only: a row with this id already exists'); END;
--> statement-breakpoint
CREATE TRIGGER factory_tests_no_update BEFORE UPDATE ON factory_tests
BEGIN SELECT RAISE(ABORT, 'factory_tests is append-only'); END;
--> statement-breakpoint
CREATE TRIGGER factory_tests_no_delete BEFORE DELETE ON factory_tests
BEGIN SELECT RAISE(ABORT, 'factory_tests is append-only'); END;
--> statement-breakpoint
CREATE TRIGGER commissionings_no_replace BEFORE INSERT ON commissionings
WHEN EXISTS (SELECT 1 FROM commissionings WHERE id = NEW.id) OR EXISTS (SELECT 1 FROM commissionings WHERE certificate_no = NEW.certificate_no)
BEGIN SELECT RAISE(ABORT, 'commissionings is append-only: a row with this id already exists'); END;
--> statement-breakpoint
CREATE TRIGGER commissionings_no_update BEFORE UPDATE ON commissionings
BEGIN SELECT RAISE(ABORT, 'commissionings is append-only'); END;
--> statement-breakpoint
CREATE TRIGGER commissionings_no_delete BEFORE DELETE ON commissionings
BEGIN SELECT RAISE(ABORT, 'commissionings is append-only'); END;
--> statement-breakpoint
-- Sessions end when what they were issued for changes: the request hook compares the token's
-- copy of session_version with the row's (OWASP ASVS 4.0 V3.3.1, V3.3.3).
CREATE TRIGGER users_end_sessions AFTER UPDATE OF role, organisation_id, active, password_hash ON users
WHEN NEW.session_version = OLD.session_version AND (
	NEW.role IS NOT OLD.role OR NEW.organisation_id IS NOT OLD.organisation_id
	OR NEW.active IS NOT OLD.active OR NEW.password_hash IS NOT OLD.password_hash)
BEGIN UPDATE users SET session_version = OLD.session_version + 1 WHERE id = NEW.id; END;
--> statement-breakpoint
CREATE TRIGGER organisations_end_sessions AFTER UPDATE OF active ON organisations
WHEN NEW.active = 0 AND OLD.active = 1
BEGIN UPDATE users SET session_version = session_version + 1 WHERE organisation_id = NEW.id; END;
