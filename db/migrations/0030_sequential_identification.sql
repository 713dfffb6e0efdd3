-- 0030: sequential identification. A labelled report moves the candidate's subtype probabilities by
-- Bayes' rule through the active calibration's confusion channel; below the identification confidence
-- the candidate becomes 'unsettled' (a sharper spectrum is wanted) and plans use its posterior.
ALTER TABLE candidates DROP CONSTRAINT IF EXISTS candidates_state_check;
ALTER TABLE candidates ADD CONSTRAINT candidates_state_known
    CHECK (state IN ('new','planned','observed','classified','abandoned','stale','unsettled'));

-- label → probability after the last labelled report (NULL: no labelled report weighed yet)
ALTER TABLE candidates ADD COLUMN posterior jsonb NULL;

-- What each labelled report carried and what it did.
ALTER TABLE observation_reports ADD COLUMN reported_probabilities jsonb NULL;  -- label → probability as reported
ALTER TABLE observation_reports ADD COLUMN phase_days double precision NULL;   -- rest-frame days from peak as reported
ALTER TABLE observation_reports ADD COLUMN resolving_power double precision NULL; -- unit's R at the time of the report
ALTER TABLE observation_reports ADD COLUMN confusion_cell jsonb NULL;          -- calibration cells used (R, S/N, phase bins)
ALTER TABLE observation_reports ADD COLUMN prior jsonb NULL;                   -- label → probability before the report
ALTER TABLE observation_reports ADD COLUMN posterior jsonb NULL;               -- label → probability after the report
ALTER TABLE observation_reports ADD COLUMN calibration_id uuid NULL;           -- calibration whose channel was used
