-- 0080: a candidate's 'created' history event is no longer a stored row: it is read from the
-- candidate itself (created_at, broker). Every creator wrote that row with at = the candidate's
-- created_at and actor = its broker (checked on the demo and test databases before this step:
-- no row differed), so the history reads exactly as before, and a batch of 5,000 new
-- candidates writes 5,000 fewer rows and 10,000 fewer index entries (docs/operations.md,
-- "Batch intake at scale").
--
-- The stored events (updated, transition, observation) move to candidate_event_log; the view
-- candidate_events keeps the old name and columns for every reader. The synthesized 'created'
-- event has id 0, below every stored id, so "ORDER BY id" still puts it first in a candidate's
-- history. Write events only into candidate_event_log; it refuses a 'created' row, which
-- would appear twice.
SET LOCAL statement_timeout = 0;

ALTER TABLE candidate_events RENAME TO candidate_event_log;
ALTER TABLE candidate_event_log RENAME CONSTRAINT candidate_events_pkey TO candidate_event_log_pkey;
ALTER INDEX candidate_events_candidate RENAME TO candidate_event_log_candidate;

DELETE FROM candidate_event_log WHERE kind = 'created';
ALTER TABLE candidate_event_log ADD CONSTRAINT candidate_event_log_not_created CHECK (kind <> 'created');

CREATE VIEW candidate_events AS
SELECT 0::bigint AS id, c.id AS candidate_id, c.created_at AS at, 'created'::text AS kind,
       NULL::text AS from_state, NULL::text AS to_state, c.broker AS actor, NULL::text AS detail
FROM candidates c
UNION ALL
SELECT e.id, e.candidate_id, e.at, e.kind, e.from_state, e.to_state, e.actor, e.detail
FROM candidate_event_log e;

COMMENT ON VIEW candidate_events IS
    'A candidate''s history: its created event (from candidates, id 0) and the stored events of candidate_event_log (migration 0080); write into candidate_event_log.';
