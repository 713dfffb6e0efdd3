-- 0001: API keys, sites and spectrographs (the roster).
-- Every time is timestamptz (UTC); every row that clients update carries a version for ETags.

CREATE TABLE api_keys (
    id            uuid PRIMARY KEY,
    public_id     text NOT NULL UNIQUE,          -- the non-secret part of the key, for lookup
    secret_hash   bytea NOT NULL,                -- SHA-256 of the whole key; the key itself is never stored
    name          text NOT NULL,
    scopes        text[] NOT NULL,
    observatory   text NULL,                     -- set for observatory keys: the sites they manage
    created_at    timestamptz NOT NULL,
    revoked_at    timestamptz NULL,
    CONSTRAINT api_keys_scopes_known CHECK (scopes <@ ARRAY['broker','observatory','scheduler','admin']::text[]),
    CONSTRAINT api_keys_scopes_nonempty CHECK (cardinality(scopes) > 0)
);

CREATE TABLE sites (
    id                      uuid PRIMARY KEY,
    name                    text NOT NULL UNIQUE,
    latitude_deg            double precision NOT NULL CHECK (latitude_deg BETWEEN -90 AND 90),
    longitude_deg           double precision NOT NULL CHECK (longitude_deg BETWEEN -180 AND 180),
    elevation_m             double precision NOT NULL,
    min_altitude_deg        double precision NOT NULL CHECK (min_altitude_deg BETWEEN 0 AND 90),
    sun_avoidance_deg       double precision NOT NULL CHECK (sun_avoidance_deg BETWEEN 0 AND 180),
    moon_avoidance_deg      double precision NOT NULL CHECK (moon_avoidance_deg BETWEEN 0 AND 180),
    seeing_arcsec           double precision NOT NULL CHECK (seeing_arcsec > 0),
    dark_sky_mag_arcsec2    double precision NOT NULL,
    sky_reference_wavelength_angstrom double precision NOT NULL CHECK (sky_reference_wavelength_angstrom > 0),
    extinction_mag_per_airmass double precision NOT NULL CHECK (extinction_mag_per_airmass >= 0),
    status                  text NOT NULL CHECK (status IN ('open','closed')),
    observatory             text NULL,
    version                 integer NOT NULL DEFAULT 1,
    created_at              timestamptz NOT NULL,
    updated_at              timestamptz NOT NULL
);
CREATE INDEX sites_observatory ON sites (observatory);

CREATE TABLE spectrographs (
    id                          uuid PRIMARY KEY,
    site_id                     uuid NOT NULL REFERENCES sites (id) ON DELETE RESTRICT,
    name                        text NOT NULL,
    resolving_power             double precision NOT NULL CHECK (resolving_power > 0),
    reference_wavelength_angstrom double precision NOT NULL CHECK (reference_wavelength_angstrom > 0),
    min_wavelength_angstrom     double precision NOT NULL,
    max_wavelength_angstrom     double precision NOT NULL,
    aperture_m                  double precision NOT NULL CHECK (aperture_m > 0),
    central_obstruction         double precision NOT NULL CHECK (central_obstruction >= 0 AND central_obstruction < 1),
    throughput                  double precision NOT NULL CHECK (throughput > 0 AND throughput <= 1),
    read_noise_electrons        double precision NOT NULL CHECK (read_noise_electrons >= 0),
    dark_current_electrons_per_second double precision NOT NULL CHECK (dark_current_electrons_per_second >= 0),
    pixels_per_resolution_element double precision NOT NULL CHECK (pixels_per_resolution_element >= 1),
    spatial_pixel_scale_arcsec  double precision NOT NULL CHECK (spatial_pixel_scale_arcsec > 0),
    slit_width_arcsec           double precision NOT NULL CHECK (slit_width_arcsec > 0),
    overhead_seconds            double precision NOT NULL CHECK (overhead_seconds >= 0),
    max_exposure_seconds        double precision NOT NULL CHECK (max_exposure_seconds > 0),
    max_airmass                 double precision NOT NULL CHECK (max_airmass >= 1),
    cost_per_hour               double precision NOT NULL CHECK (cost_per_hour >= 0),
    nightly_budget_hours        double precision NOT NULL CHECK (nightly_budget_hours >= 0 AND nightly_budget_hours <= 24),
    status                      text NOT NULL CHECK (status IN ('available','closed')),
    version                     integer NOT NULL DEFAULT 1,
    created_at                  timestamptz NOT NULL,
    updated_at                  timestamptz NOT NULL,
    CONSTRAINT spectrographs_range CHECK (min_wavelength_angstrom > 0 AND max_wavelength_angstrom > min_wavelength_angstrom),
    CONSTRAINT spectrographs_name_per_site UNIQUE (site_id, name)
);
CREATE INDEX spectrographs_site ON spectrographs (site_id);
