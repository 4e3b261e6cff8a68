-- Readings and corrective actions are the record: never edited, never deleted (a correction is a new row).
CREATE TRIGGER readings_append_only BEFORE UPDATE OR DELETE ON readings
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER readings_no_truncate BEFORE TRUNCATE ON readings
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER corrective_actions_append_only BEFORE UPDATE OR DELETE ON corrective_actions
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER corrective_actions_no_truncate BEFORE TRUNCATE ON corrective_actions
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
ALTER TABLE readings ADD CONSTRAINT readings_corrects_fk FOREIGN KEY (corrects_reading_id) REFERENCES readings(id);
