-- 002: indexes for the questions users ask, sized for a year of one station (about ten
-- million points). The UNIQUE constraints of 001 already index sweep (run_id, sweep_index),
-- point (sweep_id, step_index), unit (serial) and reading by point (its primary key).
BEGIN IMMEDIATE;

-- every run of a unit, in order (unit_history)
CREATE INDEX run_by_unit ON run (unit_id, queued_at);
-- runs of a day or a time range (run_summary WHERE day = ... or started_at BETWEEN ...)
CREATE INDEX run_by_start ON run (started_at);
CREATE INDEX run_by_start_day ON run (substr(started_at, 1, 10));
-- runs still open: the daemon looks for them at start-up
CREATE INDEX run_open ON run (state) WHERE state IN ('queued', 'running');
-- events of a run, and events over time
CREATE INDEX event_by_run ON event (run_id) WHERE run_id IS NOT NULL;
CREATE INDEX event_by_time ON event (at);

PRAGMA user_version = 2;
COMMIT;
