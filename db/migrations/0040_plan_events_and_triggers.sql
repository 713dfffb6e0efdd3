-- 0040: what triggered each plan version and how much it changed, and the outbox of plan-version events
-- (written in the same transaction as the version; read by the server-sent event stream and the webhooks).
ALTER TABLE plans ADD COLUMN trigger_kind text NOT NULL DEFAULT 'manual';
ALTER TABLE plans ADD COLUMN trigger_detail text NULL;
ALTER TABLE plans ADD COLUMN churn jsonb NULL;

CREATE TABLE plan_events (
    id          bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    night       date NOT NULL,
    version     integer NOT NULL,
    created_at  timestamptz NOT NULL,
    body        jsonb NOT NULL
);
CREATE INDEX plan_events_night ON plan_events (night, id);
