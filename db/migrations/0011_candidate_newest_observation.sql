-- The time of a candidate's newest photometry point, so that a re-posted older snapshot (its
-- newest point earlier than the stored one) is recognised as stale: reported unchanged, no
-- history event, nothing overwritten.
ALTER TABLE candidates ADD COLUMN newest_observed_at timestamptz;
UPDATE candidates c
   SET newest_observed_at = (SELECT max(p.observed_at) FROM candidate_photometry p WHERE p.candidate_id = c.id);
