-- Approved studies are immutable, also below the application: once a study is approved or
-- locked, its setup columns, runs, pool decisions and validity notes cannot change. Only its
-- status (e.g. approved -> archived) and updated_at may move. Deleting a study still cascades.
CREATE OR REPLACE FUNCTION counterpart_refuse_locked_study_edit() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF (OLD.status = 'approved' OR OLD.locked_at IS NOT NULL)
     AND (to_jsonb(NEW) - 'status' - 'updated_at') IS DISTINCT FROM (to_jsonb(OLD) - 'status' - 'updated_at') THEN
    RAISE EXCEPTION 'study % is approved and locked; start a new version to revise it', OLD.id USING ERRCODE = 'check_violation';
  END IF;
  RETURN NEW;
END $$;
--> statement-breakpoint
CREATE OR REPLACE FUNCTION counterpart_refuse_locked_study_child() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
  sid integer;
BEGIN
  IF TG_OP = 'DELETE' THEN sid := OLD.study_id; ELSE sid := NEW.study_id; END IF;
  IF EXISTS (SELECT 1 FROM studies WHERE id = sid AND (status = 'approved' OR locked_at IS NOT NULL)) THEN
    RAISE EXCEPTION 'study % is approved and locked: its % cannot change', sid, TG_TABLE_NAME USING ERRCODE = 'check_violation';
  END IF;
  IF TG_OP = 'UPDATE' AND OLD.study_id <> NEW.study_id
     AND EXISTS (SELECT 1 FROM studies WHERE id = OLD.study_id AND (status = 'approved' OR locked_at IS NOT NULL)) THEN
    RAISE EXCEPTION 'study % is approved and locked: its % cannot change', OLD.study_id, TG_TABLE_NAME USING ERRCODE = 'check_violation';
  END IF;
  IF TG_OP = 'DELETE' THEN RETURN OLD; END IF;
  RETURN NEW;
END $$;
--> statement-breakpoint
DROP TRIGGER IF EXISTS studies_locked_immutable ON studies;
--> statement-breakpoint
CREATE TRIGGER studies_locked_immutable BEFORE UPDATE ON studies FOR EACH ROW EXECUTE FUNCTION counterpart_refuse_locked_study_edit();
--> statement-breakpoint
DROP TRIGGER IF EXISTS study_runs_locked_immutable ON study_runs;
--> statement-breakpoint
CREATE TRIGGER study_runs_locked_immutable BEFORE INSERT OR UPDATE OR DELETE ON study_runs FOR EACH ROW EXECUTE FUNCTION counterpart_refuse_locked_study_child();
--> statement-breakpoint
DROP TRIGGER IF EXISTS study_pool_decisions_locked_immutable ON study_pool_decisions;
--> statement-breakpoint
CREATE TRIGGER study_pool_decisions_locked_immutable BEFORE INSERT OR UPDATE OR DELETE ON study_pool_decisions FOR EACH ROW EXECUTE FUNCTION counterpart_refuse_locked_study_child();
--> statement-breakpoint
DROP TRIGGER IF EXISTS validity_notes_locked_immutable ON validity_notes;
--> statement-breakpoint
CREATE TRIGGER validity_notes_locked_immutable BEFORE INSERT OR UPDATE OR DELETE ON validity_notes FOR EACH ROW EXECUTE FUNCTION counterpart_refuse_locked_study_child();
