-- Signatures and confirmations are part of the record: never edited, never deleted.
CREATE TRIGGER verifications_append_only BEFORE UPDATE OR DELETE ON verifications
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER verifications_no_truncate BEFORE TRUNCATE ON verifications
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER action_confirmations_append_only BEFORE UPDATE OR DELETE ON action_confirmations
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER action_confirmations_no_truncate BEFORE TRUNCATE ON action_confirmations
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
