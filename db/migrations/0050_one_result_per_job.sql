-- 0050: a job's result row carries the job's id at most once, so a job that runs again (its
-- worker was killed after the result committed, or its heartbeat went stale) finds the result
-- it already stored instead of adding a second plan version or calibration.
CREATE UNIQUE INDEX plans_one_per_job ON plans (job_id) WHERE job_id IS NOT NULL;
CREATE UNIQUE INDEX calibrations_one_per_job ON calibrations (job_id) WHERE job_id IS NOT NULL;
