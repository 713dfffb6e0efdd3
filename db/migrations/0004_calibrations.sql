-- 0004: accuracy models (calibrations). Exactly one may be active: the one the planner uses.
CREATE TABLE calibrations (
    id                   uuid PRIMARY KEY,
    created_at           timestamptz NOT NULL,
    source               text NOT NULL CHECK (source IN ('synthetic', 'library', 'imported')),
    synthetic            boolean NOT NULL,
    library_fingerprint  text NULL,
    code_version         text NOT NULL,
    settings             jsonb NULL,
    job_id               uuid NULL,
    document             jsonb NOT NULL,
    active               boolean NOT NULL DEFAULT false
);
CREATE UNIQUE INDEX calibrations_one_active ON calibrations (active) WHERE active;
