-- 0002: durable background jobs (calibrations, large plans), with progress and ETA.
CREATE TABLE jobs (
    id             uuid PRIMARY KEY,
    kind           text NOT NULL,
    status         text NOT NULL CHECK (status IN ('queued', 'running', 'succeeded', 'failed')),
    input          jsonb NOT NULL,
    result         jsonb NULL,
    error          text NULL,
    progress       double precision NOT NULL DEFAULT 0 CHECK (progress >= 0 AND progress <= 1),
    progress_note  text NULL,
    eta_seconds    double precision NULL,
    requested_by   uuid NULL,
    attempts       integer NOT NULL DEFAULT 0,
    created_at     timestamptz NOT NULL,
    started_at     timestamptz NULL,
    finished_at    timestamptz NULL,
    heartbeat_at   timestamptz NULL
);
CREATE INDEX jobs_queued ON jobs (created_at) WHERE status = 'queued';
CREATE INDEX jobs_running ON jobs (heartbeat_at) WHERE status = 'running';
