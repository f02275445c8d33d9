-- Sealed snapshots are append-only: the database itself refuses to change or remove a row, so
-- only someone who can disable these triggers can edit one, and verification (content hash,
-- header hash, Ed25519 signature, chain link; server/services/snapshots.ts) then names it.
CREATE OR REPLACE FUNCTION snapshots_reject_change() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'snapshots are sealed and append-only: % is not allowed', TG_OP
    USING ERRCODE = 'insufficient_privilege';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER snapshots_no_update_delete
  BEFORE UPDATE OR DELETE ON snapshots
  FOR EACH ROW EXECUTE FUNCTION snapshots_reject_change();
--> statement-breakpoint
CREATE TRIGGER snapshots_no_truncate
  BEFORE TRUNCATE ON snapshots
  FOR EACH STATEMENT EXECUTE FUNCTION snapshots_reject_change();
