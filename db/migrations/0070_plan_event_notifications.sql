-- 0070: a new row of the plan-event outbox notifies channel triage_plan_events (payload: the night) at
-- commit, so every replica's relay reads the outbox at once and its server-sent-event clients see a
-- version made on any replica without waiting for the relay's poll.
CREATE FUNCTION triage_notify_plan_event() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    PERFORM pg_notify('triage_plan_events', NEW.night::text);
    RETURN NULL;
END
$$;

CREATE TRIGGER plan_events_added AFTER INSERT ON plan_events FOR EACH ROW
    EXECUTE FUNCTION triage_notify_plan_event();
