-- 0071: a long calibration runs as parts, one per R of its grid, that any replica's worker claims.
-- A part is a job (kind 'calibration-part') with parent_id = the calibration job and part = the R's index;
-- at most one part per (parent, index). A part's outcome is stored in calibration_parts in the transaction
-- that completes the part's job; the part whose transaction finds every outcome stored assembles the
-- calibration and completes the parent job in that same transaction (calibrations_one_per_job keeps it once).
ALTER TABLE jobs ADD COLUMN parent_id uuid NULL REFERENCES jobs (id) ON DELETE CASCADE;
ALTER TABLE jobs ADD COLUMN part integer NULL;
ALTER TABLE jobs ADD CONSTRAINT jobs_part_has_parent CHECK ((parent_id IS NULL) = (part IS NULL));
CREATE UNIQUE INDEX jobs_one_per_part ON jobs (parent_id, part) WHERE parent_id IS NOT NULL;

CREATE TABLE calibration_parts (
    parent_job_id  uuid NOT NULL REFERENCES jobs (id) ON DELETE CASCADE,
    part           integer NOT NULL,
    resolution     double precision NOT NULL,
    job_id         uuid NOT NULL UNIQUE,
    worker         text NOT NULL,
    seconds        double precision NOT NULL,
    finished_at    timestamptz NOT NULL,
    outcome        jsonb NOT NULL,
    PRIMARY KEY (parent_job_id, part)
);

-- A part that fails (its input, or interrupted too often) fails its parent; a parent that fails
-- withdraws its parts still queued. Whichever path fails a job (API, runner, recovery, SQL), this holds.
CREATE FUNCTION triage_job_failed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    IF NEW.parent_id IS NOT NULL THEN
        UPDATE jobs SET status = 'failed', finished_at = NEW.finished_at, eta_seconds = NULL,
            error = 'part ' || NEW.part || ' failed: ' || COALESCE(NEW.error, 'no reason given')
        WHERE id = NEW.parent_id AND status IN ('queued', 'running');
    END IF;
    UPDATE jobs SET status = 'failed', finished_at = NEW.finished_at, eta_seconds = NULL,
        error = 'withdrawn: the job it is part of failed'
    WHERE parent_id = NEW.id AND status = 'queued';
    RETURN NULL;
END
$$;

CREATE TRIGGER jobs_failed AFTER UPDATE OF status ON jobs FOR EACH ROW
    WHEN (NEW.status = 'failed' AND OLD.status IS DISTINCT FROM 'failed')
    EXECUTE FUNCTION triage_job_failed();
