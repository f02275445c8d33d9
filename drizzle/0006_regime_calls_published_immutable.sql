-- A published regime call is a record of what the desk told the traders: the database itself
-- refuses to change or remove it. A draft may be edited, published (the one allowed change of
-- state) or deleted; a correction is a new row (version + 1 in the same series).
CREATE OR REPLACE FUNCTION regime_calls_guard_published() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    IF OLD.state = 'published' THEN
      RAISE EXCEPTION 'regime call % version % is published: DELETE is not allowed', OLD.series_id, OLD.version
        USING ERRCODE = 'insufficient_privilege';
    END IF;
    RETURN OLD;
  END IF;
  IF OLD.state = 'published' THEN
    RAISE EXCEPTION 'regime call % version % is published: UPDATE is not allowed', OLD.series_id, OLD.version
      USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF NEW.state = 'published' AND NEW.published_at IS NULL THEN
    RAISE EXCEPTION 'a published regime call needs published_at'
      USING ERRCODE = 'check_violation';
  END IF;
  RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER regime_calls_published_immutable
  BEFORE UPDATE OR DELETE ON regime_calls
  FOR EACH ROW EXECUTE FUNCTION regime_calls_guard_published();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION regime_calls_reject_truncate() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'regime_calls holds published calls: TRUNCATE is not allowed'
    USING ERRCODE = 'insufficient_privilege';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER regime_calls_no_truncate
  BEFORE TRUNCATE ON regime_calls
  FOR EACH STATEMENT EXECUTE FUNCTION regime_calls_reject_truncate();
--> statement-breakpoint
-- The desk's starting list of regime names, in its own plain words. Idempotent: a name an admin
-- has since renamed or retired is not put back.
INSERT INTO regime_names (name, description) VALUES
  ('Westerly flow', 'Zonal Atlantic flow: fronts in quick succession, wet on windward coasts and mountains.'),
  ('Blocking high', 'A persistent high over or near the region: dry and settled, cold nights in winter.'),
  ('Northerly outbreak', 'Cold air from the north behind a deep low: showers, snow on high ground.'),
  ('Southwesterly mild and wet', 'Mild, moist southwesterly flow ahead of Atlantic troughs: heavy orographic rain.'),
  ('Slack high pressure', 'Weak gradients under high pressure: low cloud or fog, little wind and rain.'),
  ('Cut-off low', 'A low detached from the main flow: slow-moving, showery and uncertain.')
ON CONFLICT (name) DO NOTHING;
