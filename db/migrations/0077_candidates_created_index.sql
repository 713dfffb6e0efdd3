-- 0077: the arrival watch looks up the candidates created since its last look, newest first
-- (CandidateStore.CreatedSinceAsync). 0076 dropped the updated_at index that query leaned on; an
-- index on created_at serves it directly (range on created_at, read backwards for the order)
-- and stays cheap on the intake path: every new candidate lands at its right edge, and
-- created_at never changes afterwards.
CREATE INDEX candidates_created ON candidates (created_at DESC, id);
