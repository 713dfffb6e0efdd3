-- 0003: broker candidates, their photometry, light-curve state, lifecycle and observation reports.
-- A candidate is identified by (broker, broker_candidate_id): the broker is the posting key's public id.
-- Photometry is identified by (candidate, band, time to the microsecond). Both keys make intake idempotent.
-- candidate_photometry and candidate_events carry no foreign key: they are written only by the intake
-- merge, in the same transaction and joined to the candidate rows it just wrote, and a per-row key
-- check cost more than the inserts themselves (measured: 50,000 points 2.3 s with, see bench/).

CREATE TABLE candidates (
    id                    uuid PRIMARY KEY,
    broker                text NOT NULL,
    broker_candidate_id   text NOT NULL,
    ra_deg                double precision NOT NULL CHECK (ra_deg >= 0 AND ra_deg < 360),
    dec_deg               double precision NOT NULL CHECK (dec_deg BETWEEN -90 AND 90),
    -- unit vector of (ra, dec) for cone searches: cos(sep) = x·x0 + y·y0 + z·z0
    ux                    double precision NOT NULL,
    uy                    double precision NOT NULL,
    uz                    double precision NOT NULL,
    discovered_at         timestamptz NOT NULL,
    redshift              double precision NULL CHECK (redshift IS NULL OR redshift BETWEEN 0 AND 5),
    redshift_error        double precision NULL,
    subtype_probabilities jsonb NULL,
    science_weight        double precision NOT NULL DEFAULT 1 CHECK (science_weight > 0),
    notes                 text NULL,
    broker_state          jsonb NULL,
    content_hash          bytea NOT NULL,               -- SHA-256 of the last submission: an identical re-post changes nothing
    state                 text NOT NULL DEFAULT 'new'
                          CHECK (state IN ('new','planned','observed','classified','abandoned','stale')),
    classified_label      text NULL,
    data_version          integer NOT NULL DEFAULT 1,   -- bumped by every changing submission
    fit_version           integer NOT NULL DEFAULT 0,   -- data_version the stored fit was computed from
    fit                   jsonb NULL,                   -- light-curve snapshot at fitted_at
    prior                 jsonb NULL,                   -- subtype prior
    fitted_at             timestamptz NULL,
    -- linear model of the predicted magnitude at 6,200 Å around fitted_at, for brightness filters
    predicted_mag         double precision NULL,
    predicted_mag_rate    double precision NULL,        -- mag per day
    version               integer NOT NULL DEFAULT 1,
    created_at            timestamptz NOT NULL,
    updated_at            timestamptz NOT NULL,
    CONSTRAINT candidates_broker_id UNIQUE (broker, broker_candidate_id)
);
CREATE INDEX candidates_state ON candidates (state, id);
CREATE INDEX candidates_updated ON candidates (updated_at, id);
CREATE INDEX candidates_fit_pending ON candidates (id) WHERE fit_version < data_version;

CREATE TABLE candidate_photometry (
    candidate_id          uuid NOT NULL,              -- candidates.id (no FK: see the header)
    band                  text NOT NULL,
    observed_at           timestamptz NOT NULL,
    flux_microjy          double precision NOT NULL,
    flux_error_microjy    double precision NOT NULL CHECK (flux_error_microjy >= 0),
    upper_limit           boolean NOT NULL,
    mag_ab                double precision NULL,
    mag_ab_error          double precision NULL,
    PRIMARY KEY (candidate_id, band, observed_at)
);

CREATE TABLE candidate_events (
    id                    bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    candidate_id          uuid NOT NULL,              -- candidates.id (no FK: see the header)
    at                    timestamptz NOT NULL,
    kind                  text NOT NULL CHECK (kind IN ('created','updated','transition','observation')),
    from_state            text NULL,
    to_state              text NULL,
    actor                 text NOT NULL,
    detail                text NULL
);
CREATE INDEX candidate_events_candidate ON candidate_events (candidate_id, id);

CREATE TABLE observation_reports (
    id                    uuid PRIMARY KEY,
    candidate_id          uuid NOT NULL REFERENCES candidates (id) ON DELETE CASCADE,
    spectrograph_id       uuid NOT NULL REFERENCES spectrographs (id) ON DELETE RESTRICT,
    outcome               text NOT NULL CHECK (outcome IN ('done','weather','failed')),
    achieved_snr          double precision NULL CHECK (achieved_snr IS NULL OR achieved_snr >= 0),
    classified_label      text NULL,
    observed_at           timestamptz NOT NULL,
    reported_at           timestamptz NOT NULL,
    reporter              text NOT NULL,
    CONSTRAINT observation_done_has_snr CHECK (outcome <> 'done' OR achieved_snr IS NOT NULL),
    CONSTRAINT observation_label_only_when_done CHECK (classified_label IS NULL OR outcome = 'done')
);
CREATE INDEX observation_reports_candidate ON observation_reports (candidate_id, observed_at);
