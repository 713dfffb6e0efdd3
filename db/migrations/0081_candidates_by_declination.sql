-- 0081: candidates by declination, for cone searches. A cone of radius r around (α, δ) lies in the band
-- δ ± r, so a look-up of that band through this index replaces a scan of the whole table: the detail's list of
-- other brokers' posts of the same transient (1.5″) and the list endpoint's cone filter read a handful of rows.
-- Intake pays one more index entry per new candidate (measured in docs/operations.md, "Batch intake at scale").
CREATE INDEX candidates_dec ON candidates (dec_deg);
