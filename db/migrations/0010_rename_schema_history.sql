-- The table recording applied schema steps is called triage_schema_steps from here on.
-- On a database made before this step the runner applies this file first (its history is
-- still in the old table); on a fresh database the runner has already created
-- triage_schema_steps and this file changes nothing.
DO $$
BEGIN
  IF to_regclass('schema_migrations') IS NOT NULL AND to_regclass('triage_schema_steps') IS NULL THEN
    ALTER TABLE schema_migrations RENAME TO triage_schema_steps;
    ALTER INDEX IF EXISTS schema_migrations_pkey RENAME TO triage_schema_steps_pkey;
  END IF;
END
$$;
