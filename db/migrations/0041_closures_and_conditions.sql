-- 0041: spans when a site or one of its spectrographs is closed (hard constraints for the planner), and the
-- conditions a site reports for tonight (used in the exposure model instead of the site's typical values).
CREATE TABLE closures (
    id               uuid PRIMARY KEY,
    site_id          uuid NOT NULL REFERENCES sites (id) ON DELETE CASCADE,
    spectrograph_id  uuid NULL REFERENCES spectrographs (id) ON DELETE CASCADE,
    from_utc         timestamptz NOT NULL,
    to_utc           timestamptz NOT NULL,
    reason           text NOT NULL CHECK (reason IN ('weather','engineering','programme','other')),
    note             text NULL,
    created_at       timestamptz NOT NULL,
    created_by       text NOT NULL,
    CONSTRAINT closures_span CHECK (to_utc > from_utc)
);
CREATE INDEX closures_time ON closures (to_utc, from_utc);

CREATE TABLE site_conditions (
    id                          uuid PRIMARY KEY,
    site_id                     uuid NOT NULL REFERENCES sites (id) ON DELETE CASCADE,
    measured_at                 timestamptz NOT NULL,
    valid_until                 timestamptz NOT NULL,
    seeing_arcsec               double precision NULL CHECK (seeing_arcsec IS NULL OR (seeing_arcsec > 0 AND seeing_arcsec < 30)),
    extinction_offset_mag       double precision NULL CHECK (extinction_offset_mag IS NULL OR extinction_offset_mag BETWEEN -1 AND 10),
    sky_brightness_mag_arcsec2  double precision NULL CHECK (sky_brightness_mag_arcsec2 IS NULL OR sky_brightness_mag_arcsec2 BETWEEN 10 AND 25),
    created_at                  timestamptz NOT NULL,
    created_by                  text NOT NULL,
    CONSTRAINT site_conditions_span CHECK (valid_until > measured_at)
);
CREATE INDEX site_conditions_site ON site_conditions (site_id, measured_at DESC);
