-- Revisions, bundles and releases are immutable history. Updates are refused, except the
-- "set null" of a person column that PostgreSQL performs when an account is deleted.
-- SQLSTATE Q0001 is mapped to 409 "immutable" by src/lib/server/errors.ts.
CREATE FUNCTION quiesce_refuse_revision_update() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF (NEW.id, NEW.controller_id, NEW.number, NEW.base_number, NEW.message, NEW.source, NEW.interchange, NEW.findings, NEW.created_at)
     IS DISTINCT FROM (OLD.id, OLD.controller_id, OLD.number, OLD.base_number, OLD.message, OLD.source, OLD.interchange, OLD.findings, OLD.created_at)
     OR (NEW.author_id IS DISTINCT FROM OLD.author_id AND NEW.author_id IS NOT NULL) THEN
    RAISE EXCEPTION 'revisions are immutable; save a new revision instead' USING ERRCODE = 'Q0001';
  END IF;
  RETURN NEW;
END $$;
--> statement-breakpoint
CREATE TRIGGER revisions_immutable BEFORE UPDATE ON "revisions" FOR EACH ROW EXECUTE FUNCTION quiesce_refuse_revision_update();
--> statement-breakpoint
CREATE FUNCTION quiesce_refuse_bundle_update() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'bundles are immutable' USING ERRCODE = 'Q0001';
END $$;
--> statement-breakpoint
CREATE TRIGGER bundles_immutable BEFORE UPDATE ON "bundles" FOR EACH ROW EXECUTE FUNCTION quiesce_refuse_bundle_update();
--> statement-breakpoint
CREATE FUNCTION quiesce_refuse_release_update() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF (NEW.id, NEW.controller_id, NEW.revision_id, NEW.label, NEW.notes, NEW.published_at)
     IS DISTINCT FROM (OLD.id, OLD.controller_id, OLD.revision_id, OLD.label, OLD.notes, OLD.published_at)
     OR (NEW.published_by IS DISTINCT FROM OLD.published_by AND NEW.published_by IS NOT NULL) THEN
    RAISE EXCEPTION 'releases are immutable' USING ERRCODE = 'Q0001';
  END IF;
  RETURN NEW;
END $$;
--> statement-breakpoint
CREATE TRIGGER releases_immutable BEFORE UPDATE ON "releases" FOR EACH ROW EXECUTE FUNCTION quiesce_refuse_release_update();
