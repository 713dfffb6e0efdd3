-- 0042: webhook subscriptions per observatory and one delivery row per (subscription, plan event), created in the
-- transaction that stores the event, so that undelivered events survive restarts and are delivered once per row.
CREATE TABLE webhook_subscriptions (
    id            uuid PRIMARY KEY,
    observatory   text NULL,              -- owner (null: created by an admin)
    url           text NOT NULL,
    secret        text NOT NULL,          -- HMAC-SHA256 key of the signature header
    active        boolean NOT NULL DEFAULT true,
    created_at    timestamptz NOT NULL,
    created_by    text NOT NULL
);

CREATE TABLE webhook_deliveries (
    id                bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    subscription_id   uuid NOT NULL REFERENCES webhook_subscriptions (id) ON DELETE CASCADE,
    event_id          bigint NOT NULL REFERENCES plan_events (id) ON DELETE CASCADE,
    status            text NOT NULL DEFAULT 'pending' CHECK (status IN ('pending', 'delivered', 'failed')),
    attempts          integer NOT NULL DEFAULT 0,
    next_attempt_at   timestamptz NOT NULL,
    last_attempt_at   timestamptz NULL,
    last_status_code  integer NULL,
    last_error        text NULL,
    delivered_at      timestamptz NULL,
    CONSTRAINT webhook_deliveries_once UNIQUE (subscription_id, event_id)
);
CREATE INDEX webhook_deliveries_due ON webhook_deliveries (next_attempt_at) WHERE status = 'pending';
