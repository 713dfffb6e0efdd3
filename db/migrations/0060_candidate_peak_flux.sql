-- 0060: the brightest detection of each candidate, kept by the intake merge, so that the planner
-- can rank a flood of waiting candidates from the candidate rows alone (no photometry scan:
-- 300,000 candidates × 44 points took 18 s through the photometry index under load).
-- Points are merged, never deleted, so the stored peak is the largest flux ever sent for a
-- detection (a corrected point can only leave it too bright: the planner's bound stays a bound).
-- The backfill reads every photometry row once; no statement timeout of the connection may cut it.
SET LOCAL statement_timeout = 0;

ALTER TABLE candidates ADD COLUMN peak_flux_microjy double precision NULL;

UPDATE candidates c SET peak_flux_microjy = p.peak
FROM (SELECT candidate_id, max(flux_microjy) AS peak FROM candidate_photometry
      WHERE NOT upper_limit AND flux_microjy > 0 GROUP BY candidate_id) p
WHERE p.candidate_id = c.id;
