-- 0005: versioned night plans. A version is written whole in one transaction, or not at all,
-- so a failed run leaves the previous version the active one.
CREATE TABLE plans (
    id                        uuid PRIMARY KEY,
    night                     date NOT NULL,
    version                   integer NOT NULL,
    created_at                timestamptz NOT NULL,
    planned_from              timestamptz NOT NULL,
    objective                 text NOT NULL,
    solver_status             text NOT NULL,
    expected_identifications  double precision NOT NULL,
    assigned                  integer NOT NULL,
    job_id                    uuid NULL,
    calibration_id            uuid NULL,
    body                      jsonb NOT NULL,
    CONSTRAINT plans_night_version UNIQUE (night, version)
);
