-- The audit log is append-only: history must never be rewritten.
CREATE TRIGGER audit_log_no_update BEFORE UPDATE ON audit_log
BEGIN SELECT RAISE(ABORT, 'audit_log is append-only'); END;
--> statement-breakpoint
CREATE TRIGGER audit_log_no_delete BEFORE DELETE ON audit_log
BEGIN SELECT RAISE(ABORT, 'audit_log is append-only'); END;
--> statement-breakpoint
CREATE TRIGGER module_events_no_update BEFORE UPDATE ON module_events
BEGIN SELECT RAISE(ABORT, 'module_events is append-only'); END;
--> statement-breakpoint
CREATE TRIGGER module_events_no_delete BEFORE DELETE ON module_events
BEGIN SELECT RAISE(ABORT, 'module_events is append-only'); END;
