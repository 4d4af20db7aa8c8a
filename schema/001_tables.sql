-- 001: the tables of the store (DEVELOPERS.md, "Storage"). Rules for changing the schema: schema/README.md.
--
-- Conventions, checked here rather than trusted:
-- * SI units in column names (_volts, _amps, _ohms, _farads, _s).
-- * Times are ISO-8601 UTC text with milliseconds, '2026-12-01T21:15:14.123Z'; the GLOB
--   patterns below refuse anything else, so text comparison orders times correctly.
-- * Every real number is finite. SQLite stores a NaN as NULL (refused by NOT NULL, and by the
--   writer for nullable columns) and keeps ±Inf as a real, which `BETWEEN -1e300 AND 1e300`
--   refuses (SQLite documentation, "Datatypes In SQLite3", and from memory). Text in a REAL
--   column also fails the BETWEEN, since SQLite orders any text after every number.
--
-- The whole file is one transaction, so a failure leaves the database as it was; it also
-- applies cleanly with the plain shell: cat schema/*.sql | sqlite3 FILE.
BEGIN IMMEDIATE;

-- One test station (a bench of instruments and a fixture). Usually one per database.
CREATE TABLE station (
  station_id    INTEGER PRIMARY KEY,
  name          TEXT NOT NULL UNIQUE CHECK (length(name) BETWEEN 1 AND 200),
  first_seen_at TEXT NOT NULL CHECK (first_seen_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  last_seen_at  TEXT NOT NULL CHECK (last_seen_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  CHECK (last_seen_at >= first_seen_at)
);

-- One identity of one instrument in one role at one address, as its *IDN? reply gave it
-- (IEEE 488.2: manufacturer, model, serial number, firmware). A swapped instrument or new
-- firmware is a new row, so every reading keeps pointing at what really took it.
CREATE TABLE instrument (
  instrument_id INTEGER PRIMARY KEY,
  station_id    INTEGER NOT NULL REFERENCES station (station_id),
  role          TEXT NOT NULL CHECK (role IN ('source', 'meter', 'load', 'switch')),
  address       TEXT NOT NULL CHECK (length(address) > 0),
  manufacturer  TEXT NOT NULL CHECK (length(manufacturer) > 0),
  model         TEXT NOT NULL CHECK (length(model) > 0),
  serial_number TEXT NOT NULL,
  firmware      TEXT NOT NULL,
  first_seen_at TEXT NOT NULL CHECK (first_seen_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  last_seen_at  TEXT NOT NULL CHECK (last_seen_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  CHECK (last_seen_at >= first_seen_at),
  UNIQUE (station_id, role, address, manufacturer, model, serial_number, firmware)
);

-- A plan exactly as it was run: canonical JSON (keys sorted, no spaces) and the SHA-256 of
-- that text in lower-case hex. Immutable: a changed plan is a new row.
CREATE TABLE plan (
  plan_id        INTEGER PRIMARY KEY,
  name           TEXT NOT NULL CHECK (length(name) BETWEEN 1 AND 200),
  content_sha256 TEXT NOT NULL CHECK (length(content_sha256) = 64 AND content_sha256 NOT GLOB '*[^0-9a-f]*'),
  content_json   TEXT NOT NULL CHECK (json_valid(content_json) AND json_type(content_json) = 'object'),
  recorded_at    TEXT NOT NULL CHECK (recorded_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  UNIQUE (content_sha256, name)
);

CREATE TRIGGER plan_is_immutable BEFORE UPDATE ON plan
BEGIN
  SELECT RAISE(ABORT, 'plan rows are immutable: record a changed plan as a new plan');
END;

-- A device under test, by its serial number.
CREATE TABLE unit (
  unit_id       INTEGER PRIMARY KEY,
  serial        TEXT NOT NULL UNIQUE CHECK (length(serial) BETWEEN 1 AND 200),
  model         TEXT NOT NULL DEFAULT '',
  first_seen_at TEXT NOT NULL CHECK (first_seen_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z')
);

-- One plan applied to one unit on one station. States move forward only (trigger below):
--   queued -> running | aborted | error
--   running -> passed | failed | aborted | interrupted | error
CREATE TABLE run (
  run_id     INTEGER PRIMARY KEY,
  unit_id    INTEGER NOT NULL REFERENCES unit (unit_id),
  plan_id    INTEGER NOT NULL REFERENCES plan (plan_id),
  station_id INTEGER NOT NULL REFERENCES station (station_id),
  kind       TEXT NOT NULL CHECK (kind IN ('production', 'soak')),
  state      TEXT NOT NULL CHECK (state IN ('queued', 'running', 'passed', 'failed', 'aborted', 'interrupted', 'error')),
  queued_at  TEXT NOT NULL CHECK (queued_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  started_at TEXT CHECK (started_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  ended_at   TEXT CHECK (ended_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  operator   TEXT NOT NULL DEFAULT '',
  note       TEXT NOT NULL DEFAULT '',
  slot       INTEGER CHECK (slot IS NULL OR (typeof(slot) = 'integer' AND slot >= 1)),  -- fixture position, when it has several
  -- a run has ended exactly when its state is final
  CHECK ((ended_at IS NULL) = (state IN ('queued', 'running'))),
  -- a queued run has not started; passed, failed, interrupted and running ones have
  CHECK (state <> 'queued' OR started_at IS NULL),
  CHECK (state NOT IN ('running', 'passed', 'failed', 'interrupted') OR started_at IS NOT NULL),
  CHECK (started_at IS NULL OR started_at >= queued_at),
  CHECK (ended_at IS NULL OR ended_at >= coalesce(started_at, queued_at))
);

CREATE TRIGGER run_state_moves_forward BEFORE UPDATE OF state ON run
WHEN OLD.state <> NEW.state AND NOT (
  (OLD.state = 'queued' AND NEW.state IN ('running', 'aborted', 'error')) OR
  (OLD.state = 'running' AND NEW.state IN ('passed', 'failed', 'aborted', 'interrupted', 'error')))
BEGIN
  SELECT RAISE(ABORT, 'run state can only move forward: queued -> running -> passed, failed, aborted, interrupted or error');
END;

CREATE TRIGGER run_identity_is_fixed BEFORE UPDATE OF unit_id, plan_id, station_id, kind, queued_at ON run
WHEN NEW.unit_id IS NOT OLD.unit_id OR NEW.plan_id IS NOT OLD.plan_id OR NEW.station_id IS NOT OLD.station_id
  OR NEW.kind IS NOT OLD.kind OR NEW.queued_at IS NOT OLD.queued_at
BEGIN
  SELECT RAISE(ABORT, 'a run keeps its unit, plan, station, kind and queue time');
END;

-- One pass over the load steps of a plan; a soak run has many, numbered from 0.
CREATE TABLE sweep (
  sweep_id    INTEGER PRIMARY KEY,
  run_id      INTEGER NOT NULL REFERENCES run (run_id),
  sweep_index INTEGER NOT NULL CHECK (typeof(sweep_index) = 'integer' AND sweep_index >= 0),
  started_at  TEXT NOT NULL CHECK (started_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  ended_at    TEXT CHECK (ended_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  CHECK (ended_at IS NULL OR ended_at >= started_at),
  UNIQUE (run_id, sweep_index)
);

-- One settled load step. The load was set either to a current (CC mode) or to a resistance
-- (CR mode): exactly one of set_load_amps and set_load_ohms is present.
CREATE TABLE point (
  point_id           INTEGER PRIMARY KEY,
  sweep_id           INTEGER NOT NULL REFERENCES sweep (sweep_id),
  step_index         INTEGER NOT NULL CHECK (typeof(step_index) = 'integer' AND step_index >= 0),
  set_load_amps      REAL CHECK (set_load_amps BETWEEN 0 AND 1e300),
  set_load_ohms      REAL CHECK (set_load_ohms BETWEEN 0 AND 1e300),
  measured_load_amps REAL CHECK (measured_load_amps BETWEEN -1e300 AND 1e300),
  dc_volts           REAL NOT NULL CHECK (dc_volts BETWEEN -1e300 AND 1e300),
  ripple_rms_volts   REAL CHECK (ripple_rms_volts BETWEEN 0 AND 1e300),
  ripple_pp_volts    REAL CHECK (ripple_pp_volts BETWEEN 0 AND 1e300),
  settle_s           REAL NOT NULL CHECK (settle_s BETWEEN 0 AND 1e300),
  settled            INTEGER NOT NULL CHECK (settled IN (0, 1)),  -- 0: max_s ran out first
  step_started_at    TEXT NOT NULL CHECK (step_started_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  taken_at           TEXT NOT NULL CHECK (taken_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  CHECK ((set_load_amps IS NULL) <> (set_load_ohms IS NULL)),
  UNIQUE (sweep_id, step_index)
);

-- Every raw value an instrument returned for a point (settling reads included), in the SI
-- unit its kind names ('dc_volts', 'ac_rms_volts', 'load_amps', ...). Kept in the order
-- taken (seq), clustered by point so a point's readings sit together on disk.
-- SCPI-1999 reserves 9.9E37 for infinity and 9.91E37 for not-a-number (from memory); a
-- value that large is an instrument's overload or error marker, never a reading.
CREATE TABLE reading (
  point_id      INTEGER NOT NULL REFERENCES point (point_id),
  seq           INTEGER NOT NULL CHECK (typeof(seq) = 'integer' AND seq >= 0),
  instrument_id INTEGER NOT NULL REFERENCES instrument (instrument_id),
  kind          TEXT NOT NULL CHECK (kind GLOB '[a-z]*' AND kind NOT GLOB '*[^a-z0-9_]*'
                  AND (kind GLOB '*_volts' OR kind GLOB '*_amps' OR kind GLOB '*_ohms' OR kind GLOB '*_hz' OR kind GLOB '*_s')),
  value         REAL NOT NULL CHECK (value BETWEEN -9e37 AND 9e37),
  taken_at      TEXT NOT NULL CHECK (taken_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  PRIMARY KEY (point_id, seq)
) WITHOUT ROWID;

CREATE TRIGGER point_is_immutable BEFORE UPDATE ON point
BEGIN
  SELECT RAISE(ABORT, 'points are immutable once committed');
END;

CREATE TRIGGER reading_is_immutable BEFORE UPDATE ON reading
BEGIN
  SELECT RAISE(ABORT, 'readings are immutable once committed');
END;

-- The analysis of one sweep (DEVELOPERS.md, "Analysis"). A figure the analysis could not make is NULL.
CREATE TABLE sweep_result (
  sweep_id                     INTEGER PRIMARY KEY REFERENCES sweep (sweep_id),
  computed_at                  TEXT NOT NULL CHECK (computed_at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  fit_points                   INTEGER NOT NULL CHECK (typeof(fit_points) = 'integer' AND fit_points >= 0),
  -- impedance fit near zero load: V_oc = V(0), Z_out = -dV/dI at I = 0
  v_oc_volts                   REAL CHECK (v_oc_volts BETWEEN -1e300 AND 1e300),
  z_out_ohms                   REAL CHECK (z_out_ohms BETWEEN -1e300 AND 1e300),
  z_out_stderr_ohms            REAL CHECK (z_out_stderr_ohms BETWEEN 0 AND 1e300),
  z_chord_ohms                 REAL CHECK (z_chord_ohms BETWEEN -1e300 AND 1e300),  -- chord to rated load
  -- Cockcroft-Walton model figures derived from the measurement
  cascade_r_ohms               REAL CHECK (cascade_r_ohms BETWEEN -1e300 AND 1e300),
  cascade_r_stderr_ohms        REAL CHECK (cascade_r_stderr_ohms BETWEEN 0 AND 1e300),
  effective_capacitance_farads REAL CHECK (effective_capacitance_farads BETWEEN -1e300 AND 1e300),
  diode_drop_volts             REAL CHECK (diode_drop_volts BETWEEN -1e300 AND 1e300),
  diode_m                      REAL CHECK (diode_m BETWEEN -1e300 AND 1e300),  -- lumped-diode fit, dimensionless
  diode_i0_amps                REAL CHECK (diode_i0_amps BETWEEN -1e300 AND 1e300),
  -- ripple at the rated load
  rated_load_amps              REAL CHECK (rated_load_amps BETWEEN 0 AND 1e300),
  ripple_rated_rms_volts       REAL CHECK (ripple_rated_rms_volts BETWEEN 0 AND 1e300),
  ripple_rated_pp_volts        REAL CHECK (ripple_rated_pp_volts BETWEEN 0 AND 1e300),
  -- the model's predictions for the same unit and drive
  model_v_oc_volts             REAL CHECK (model_v_oc_volts BETWEEN -1e300 AND 1e300),
  model_z_out_ohms             REAL CHECK (model_z_out_ohms BETWEEN -1e300 AND 1e300),
  model_droop_rated_volts      REAL CHECK (model_droop_rated_volts BETWEEN -1e300 AND 1e300),
  model_ripple_rated_pp_volts  REAL CHECK (model_ripple_rated_pp_volts BETWEEN -1e300 AND 1e300),
  -- soak drift up to this sweep: slopes per hour with their standard errors
  v_oc_drift_volts_per_hour           REAL CHECK (v_oc_drift_volts_per_hour BETWEEN -1e300 AND 1e300),
  v_oc_drift_stderr_volts_per_hour    REAL CHECK (v_oc_drift_stderr_volts_per_hour BETWEEN 0 AND 1e300),
  z_out_drift_ohms_per_hour           REAL CHECK (z_out_drift_ohms_per_hour BETWEEN -1e300 AND 1e300),
  z_out_drift_stderr_ohms_per_hour    REAL CHECK (z_out_drift_stderr_ohms_per_hour BETWEEN 0 AND 1e300),
  ripple_drift_volts_per_hour         REAL CHECK (ripple_drift_volts_per_hour BETWEEN -1e300 AND 1e300),
  ripple_drift_stderr_volts_per_hour  REAL CHECK (ripple_drift_stderr_volts_per_hour BETWEEN 0 AND 1e300),
  -- the verdict and its reasons (a JSON array of strings; empty when it passed)
  verdict                      TEXT CHECK (verdict IN ('pass', 'fail')),
  verdict_reasons_json         TEXT NOT NULL DEFAULT '[]' CHECK (json_valid(verdict_reasons_json) AND json_type(verdict_reasons_json) = 'array')
);

-- Anything notable: a fault, a reconnect, a safety trip. Not always about a run.
CREATE TABLE event (
  event_id   INTEGER PRIMARY KEY,
  at         TEXT NOT NULL CHECK (at GLOB '[0-9][0-9][0-9][0-9]-[01][0-9]-[0-3][0-9]T[0-2][0-9]:[0-5][0-9]:[0-6][0-9].[0-9][0-9][0-9]Z'),
  level      TEXT NOT NULL CHECK (level IN ('info', 'warning', 'error')),
  source     TEXT NOT NULL CHECK (length(source) > 0),
  code       TEXT NOT NULL CHECK (code GLOB '[a-z]*' AND code NOT GLOB '*[^a-z0-9_.]*'),
  message    TEXT NOT NULL,
  run_id     INTEGER REFERENCES run (run_id),
  station_id INTEGER REFERENCES station (station_id)
);

PRAGMA user_version = 1;
COMMIT;
