-- 003: views for the questions users ask. Each is plain SQL over the tables; filter them with
-- WHERE as usual (the indexes of 002 serve the filters shown).
BEGIN IMMEDIATE;

-- One row per run, with the figures of its latest analysed sweep (a production run has one
-- sweep; for a soak run that is the most recent result, drift included). `day` is the UTC
-- date the run started (NULL for a run that never started).
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
       (SELECT count(*) FROM sweep w WHERE w.run_id = r.run_id) AS sweeps,
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
-- it, else the set value) against DC output and ripple.
--   SELECT load_amps, dc_volts FROM iv_curve WHERE run_id = 42 ORDER BY sweep_index, step_index;
CREATE VIEW iv_curve AS
SELECT w.run_id,
       p.sweep_id,
       w.sweep_index,
       p.step_index,
       p.point_id,
       coalesce(p.measured_load_amps, p.set_load_amps) AS load_amps,
       p.set_load_amps,
       p.set_load_ohms,
       p.dc_volts,
       p.ripple_rms_volts,
       p.ripple_pp_volts,
       p.settle_s,
       p.settled,
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

-- Per sweep of a soak run: when it started, hours into the run, and its figures.
--   SELECT elapsed_s / 3600.0, z_out_ohms FROM soak_trend WHERE run_id = 42;
CREATE VIEW soak_trend AS
SELECT r.run_id,
       u.serial,
       w.sweep_index,
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

PRAGMA user_version = 3;
COMMIT;
