-- 0075: a candidate's photometry is stored as one row of parallel arrays (its light curve)
-- instead of one row per point. A batch of 5,000 candidates × 10 points then writes 5,000
-- light-curve rows and 5,000 index entries instead of 50,000 of each, which was most of the
-- intake time (see docs/operations.md, "Batch intake at scale").
--
-- Element k of every array is one point; points are kept in time order (then band), each
-- (band, observed_at) at most once. Writers: the intake merge only, while it holds the lock of
-- the candidate row it just inserted or updated, so two batches never merge one light curve at
-- the same time.
--
-- Readers keep the old shape: the view candidate_photometry yields one row per point with the
-- columns of the former table, so every query over it answers as before.
SET LOCAL statement_timeout = 0;

CREATE TABLE candidate_light_curves (
    candidate_id          uuid PRIMARY KEY,            -- candidates.id (no FK: see 0003's header)
    band                  text[] NOT NULL,
    observed_at           timestamptz[] NOT NULL,
    flux_microjy          double precision[] NOT NULL,
    flux_error_microjy    double precision[] NOT NULL,
    upper_limit           boolean[] NOT NULL,
    mag_ab                double precision[] NOT NULL,  -- NULL elements where the broker sent no magnitude
    mag_ab_error          double precision[] NOT NULL,
    CONSTRAINT light_curve_aligned CHECK (
        cardinality(band) = cardinality(observed_at) AND cardinality(band) = cardinality(flux_microjy)
        AND cardinality(band) = cardinality(flux_error_microjy) AND cardinality(band) = cardinality(upper_limit)
        AND cardinality(band) = cardinality(mag_ab) AND cardinality(band) = cardinality(mag_ab_error)),
    CONSTRAINT light_curve_errors_non_negative CHECK (0 <= ALL (flux_error_microjy))
);

INSERT INTO candidate_light_curves (candidate_id, band, observed_at, flux_microjy, flux_error_microjy, upper_limit, mag_ab, mag_ab_error)
SELECT candidate_id,
       array_agg(band ORDER BY observed_at, band), array_agg(observed_at ORDER BY observed_at, band),
       array_agg(flux_microjy ORDER BY observed_at, band), array_agg(flux_error_microjy ORDER BY observed_at, band),
       array_agg(upper_limit ORDER BY observed_at, band), array_agg(mag_ab ORDER BY observed_at, band),
       array_agg(mag_ab_error ORDER BY observed_at, band)
FROM candidate_photometry
GROUP BY candidate_id
ORDER BY candidate_id;

DROP TABLE candidate_photometry;

CREATE VIEW candidate_photometry AS
SELECT l.candidate_id, p.band, p.observed_at, p.flux_microjy, p.flux_error_microjy, p.upper_limit, p.mag_ab, p.mag_ab_error
FROM candidate_light_curves l
CROSS JOIN LATERAL unnest(l.band, l.observed_at, l.flux_microjy, l.flux_error_microjy, l.upper_limit, l.mag_ab, l.mag_ab_error)
    AS p(band, observed_at, flux_microjy, flux_error_microjy, upper_limit, mag_ab, mag_ab_error);

COMMENT ON VIEW candidate_photometry IS
    'One row per photometry point, read from candidate_light_curves (migration 0075); written only by the intake merge.';
