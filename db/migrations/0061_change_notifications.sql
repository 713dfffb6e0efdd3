-- 0061: notifications that every replica's listener receives at commit:
--   triage_keys  (payload: key id) when a key is issued, revoked, its scopes change or it is deleted,
--                so every replica's key cache forgets it (and keys it remembered as unknown) at once,
--                whoever made the change (API, CLI, SQL);
--   triage_jobs  (payload: job kind) when a job becomes queued, so an idle worker anywhere claims it at once.
CREATE FUNCTION triage_notify_key_changed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    PERFORM pg_notify('triage_keys', COALESCE(NEW.id, OLD.id)::text);
    RETURN NULL;
END
$$;

CREATE TRIGGER api_keys_changed AFTER UPDATE ON api_keys FOR EACH ROW
    WHEN (OLD.revoked_at IS DISTINCT FROM NEW.revoked_at OR OLD.scopes IS DISTINCT FROM NEW.scopes
          OR OLD.observatory IS DISTINCT FROM NEW.observatory)
    EXECUTE FUNCTION triage_notify_key_changed();

CREATE TRIGGER api_keys_deleted AFTER DELETE ON api_keys FOR EACH ROW
    EXECUTE FUNCTION triage_notify_key_changed();

CREATE TRIGGER api_keys_issued AFTER INSERT ON api_keys FOR EACH ROW
    EXECUTE FUNCTION triage_notify_key_changed();

CREATE FUNCTION triage_notify_job_queued() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    PERFORM pg_notify('triage_jobs', NEW.kind);
    RETURN NULL;
END
$$;

CREATE TRIGGER jobs_queued AFTER INSERT OR UPDATE OF status ON jobs FOR EACH ROW
    WHEN (NEW.status = 'queued')
    EXECUTE FUNCTION triage_notify_job_queued();
