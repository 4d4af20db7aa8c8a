-- 004: the views count sweeps and steps from 1, as a person counts and as zout shows them in
-- watch, status, events, reports and exports. The tables keep their 0-based sweep_index and
-- step_index as keys. run_summary also names the run's slot and note, and which sweep its
-- figures come from; iv_curve carries the measured load current and the step's start time.
BEGIN IMMEDIATE;

DROP VIEW unit_history;
DROP VIEW run_summary;
DROP VIEW iv_curve;
DROP VIEW soak_trend;

-- One row per run, with the figures of its latest analysed sweep (`result_sweep`; a
-- production run has one sweep; for a soak run that is the most recent result, drift
-- included). `day` is the UTC date the run started (NULL for a run that never started).
--   SELECT * FROM run_summary WHERE day = '2026-12-01';
CREATE VIEW run_summary AS
SELECT r.run_id,
       st.name AS station,
       u.serial,
       u.model,
       p.name AS plan_name,
       r.kind,
       r.state,
       r.queued_at,
       r.started_at,
       r.ended_at,
       substr(r.started_at, 1, 10) AS day,
       r.operator,
       r.note,
       r.slot,
       (SELECT count(*) FROM sweep w WHERE w.run_id = r.run_id) AS sweeps,
       res.sweep_id AS result_sweep_id,
       (SELECT w.sweep_index + 1 FROM sweep w WHERE w.sweep_id = res.sweep_id) AS result_sweep,
       res.v_oc_volts,
       res.z_out_ohms,
       res.z_out_stderr_ohms,
       res.rated_load_amps,
       res.ripple_rated_pp_volts,
       res.verdict,
       res.verdict_reasons_json
FROM run r
JOIN unit u ON u.unit_id = r.unit_id
JOIN plan p ON p.plan_id = r.plan_id
JOIN station st ON st.station_id = r.station_id
LEFT JOIN sweep_result res ON res.sweep_id = (
  SELECT w.sweep_id FROM sweep w JOIN sweep_result x ON x.sweep_id = w.sweep_id
  WHERE w.run_id = r.run_id ORDER BY w.sweep_index DESC LIMIT 1);

-- The measured V(I) curve: one row per point, load current (measured when the load reported
-- it, else the set value) against DC output and ripple. `sweep` and `step` count from 1.
--   SELECT load_amps, dc_volts FROM iv_curve WHERE run_id = 42 ORDER BY sweep, step;
CREATE VIEW iv_curve AS
SELECT w.run_id,
       p.sweep_id,
       w.sweep_index + 1 AS sweep,
       p.step_index + 1 AS step,
       p.point_id,
       coalesce(p.measured_load_amps, p.set_load_amps) AS load_amps,
       p.set_load_amps,
       p.set_load_ohms,
       p.measured_load_amps,
       p.dc_volts,
       p.ripple_rms_volts,
       p.ripple_pp_volts,
       p.settle_s,
       p.settled,
       p.step_started_at,
       p.taken_at
FROM point p
JOIN sweep w ON w.sweep_id = p.sweep_id;

-- Every run of a serial over time, oldest first.
--   SELECT * FROM unit_history WHERE serial = 'CW5-000123';
CREATE VIEW unit_history AS
SELECT serial, model, run_id, kind, state, queued_at, started_at, ended_at, plan_name, station,
       operator, v_oc_volts, z_out_ohms, ripple_rated_pp_volts, verdict
FROM run_summary
ORDER BY serial, queued_at, run_id;

-- Per sweep of a soak run (`sweep` from 1): when it started, seconds into the run, and its figures.
--   SELECT elapsed_s / 3600.0, z_out_ohms FROM soak_trend WHERE run_id = 42;
CREATE VIEW soak_trend AS
SELECT r.run_id,
       u.serial,
       w.sweep_index + 1 AS sweep,
       w.started_at AS sweep_started_at,
       round((julianday(w.started_at) - julianday(r.started_at)) * 86400.0, 3) AS elapsed_s,
       res.v_oc_volts,
       res.z_out_ohms,
       res.ripple_rated_pp_volts,
       res.ripple_rated_rms_volts,
       res.verdict
FROM run r
JOIN unit u ON u.unit_id = r.unit_id
JOIN sweep w ON w.run_id = r.run_id
LEFT JOIN sweep_result res ON res.sweep_id = w.sweep_id
WHERE r.kind = 'soak';

PRAGMA user_version = 4;
COMMIT;
