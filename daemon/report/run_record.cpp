#include "run_record.h"

#include <fmt/format.h>

#include <map>

#include "daemon/store/database.h"
#include "daemon/store/store_error.h"

namespace zout::report {
namespace {

std::optional<double> optional_real(const store::Statement& s, int column) {
  return s.is_null(column) ? std::nullopt : std::optional<double>(s.column_real(column));
}

std::optional<std::string> optional_text(const store::Statement& s, int column) {
  return s.is_null(column) ? std::nullopt : std::optional<std::string>(s.column_text(column));
}

std::optional<std::int64_t> optional_int(const store::Statement& s, int column) {
  return s.is_null(column) ? std::nullopt : std::optional<std::int64_t>(s.column_int(column));
}

RunHeader load_header(store::Database& db, std::int64_t run_id, std::string& plan_json) {
  auto s = db.prepare(
      "SELECT s.run_id, s.station, s.serial, s.model, s.plan_name, s.kind, s.state, s.queued_at, s.started_at, "
      "s.ended_at, s.operator, r.note, r.slot, s.sweeps, p.content_json "
      "FROM run_summary s JOIN run r ON r.run_id = s.run_id JOIN plan p ON p.plan_id = r.plan_id "
      "WHERE s.run_id = :run");
  s.bind_int(":run", run_id);
  if (!s.step()) throw RunNotFound(fmt::format("no run {} in {}", run_id, db.path().string()));
  RunHeader h;
  h.run_id = s.column_int(0);
  h.station = s.column_text(1);
  h.serial = s.column_text(2);
  h.model = s.column_text(3);
  h.plan_name = s.column_text(4);
  h.kind = s.column_text(5);
  h.state = s.column_text(6);
  h.queued_at = s.column_text(7);
  h.started_at = optional_text(s, 8);
  h.ended_at = optional_text(s, 9);
  h.operator_name = s.column_text(10);
  h.note = s.column_text(11);
  h.slot = optional_int(s, 12);
  h.sweeps = s.column_int(13);
  plan_json = s.column_text(14);
  return h;
}

std::vector<RunPoint> load_points(store::Database& db, std::int64_t run_id) {
  std::vector<RunPoint> points;
  std::map<std::int64_t, std::size_t> index_of_point;
  {
    auto s = db.prepare(
        "SELECT c.point_id, c.sweep_id, c.sweep_index, c.step_index, c.load_amps, c.set_load_amps, c.set_load_ohms, "
        "p.measured_load_amps, c.dc_volts, c.ripple_rms_volts, c.ripple_pp_volts, c.settle_s, c.settled, "
        "p.step_started_at, c.taken_at "
        "FROM iv_curve c JOIN point p ON p.point_id = c.point_id WHERE c.run_id = :run "
        "ORDER BY c.sweep_index, c.step_index");
    s.bind_int(":run", run_id);
    while (s.step()) {
      RunPoint p;
      p.point_id = s.column_int(0);
      p.sweep_id = s.column_int(1);
      p.sweep_index = s.column_int(2);
      p.step_index = s.column_int(3);
      p.load_amps = optional_real(s, 4);
      p.set_load_amps = optional_real(s, 5);
      p.set_load_ohms = optional_real(s, 6);
      p.measured_load_amps = optional_real(s, 7);
      p.dc_volts = s.column_real(8);
      p.ripple_rms_volts = optional_real(s, 9);
      p.ripple_pp_volts = optional_real(s, 10);
      p.settle_s = s.column_real(11);
      p.settled = s.column_int(12) != 0;
      p.step_started_at = s.column_text(13);
      p.taken_at = s.column_text(14);
      index_of_point[p.point_id] = points.size();
      points.push_back(std::move(p));
    }
  }
  auto s = db.prepare(
      "SELECT rd.point_id, rd.seq, rd.instrument_id, i.role, rd.kind, rd.value, rd.taken_at "
      "FROM reading rd JOIN point p ON p.point_id = rd.point_id JOIN sweep w ON w.sweep_id = p.sweep_id "
      "JOIN instrument i ON i.instrument_id = rd.instrument_id "
      "WHERE w.run_id = :run ORDER BY rd.point_id, rd.seq");
  s.bind_int(":run", run_id);
  while (s.step()) {
    RunReading r;
    r.seq = s.column_int(1);
    r.instrument_id = s.column_int(2);
    r.instrument_role = s.column_text(3);
    r.kind = s.column_text(4);
    r.value = s.column_real(5);
    r.taken_at = s.column_text(6);
    points[index_of_point.at(s.column_int(0))].readings.push_back(std::move(r));
  }
  return points;
}

std::vector<SweepResultRow> load_sweep_results(store::Database& db, std::int64_t run_id) {
  std::vector<SweepResultRow> rows;
  auto s = db.prepare(
      "SELECT x.sweep_id, w.sweep_index, x.computed_at, x.fit_points, x.v_oc_volts, x.z_out_ohms, "
      "x.z_out_stderr_ohms, x.z_chord_ohms, x.cascade_r_ohms, x.cascade_r_stderr_ohms, "
      "x.effective_capacitance_farads, x.diode_drop_volts, x.diode_m, x.diode_i0_amps, x.rated_load_amps, "
      "x.ripple_rated_rms_volts, x.ripple_rated_pp_volts, x.model_v_oc_volts, x.model_z_out_ohms, "
      "x.model_droop_rated_volts, x.model_ripple_rated_pp_volts, x.v_oc_drift_volts_per_hour, "
      "x.v_oc_drift_stderr_volts_per_hour, x.z_out_drift_ohms_per_hour, x.z_out_drift_stderr_ohms_per_hour, "
      "x.ripple_drift_volts_per_hour, x.ripple_drift_stderr_volts_per_hour, x.verdict, x.verdict_reasons_json "
      "FROM sweep_result x JOIN sweep w ON w.sweep_id = x.sweep_id WHERE w.run_id = :run ORDER BY w.sweep_index");
  s.bind_int(":run", run_id);
  while (s.step()) {
    SweepResultRow r;
    r.sweep_id = s.column_int(0);
    r.sweep_index = s.column_int(1);
    r.computed_at = s.column_text(2);
    r.fit_points = s.column_int(3);
    std::optional<double>* reals[] = {&r.v_oc_volts,
                                      &r.z_out_ohms,
                                      &r.z_out_stderr_ohms,
                                      &r.z_chord_ohms,
                                      &r.cascade_r_ohms,
                                      &r.cascade_r_stderr_ohms,
                                      &r.effective_capacitance_farads,
                                      &r.diode_drop_volts,
                                      &r.diode_m,
                                      &r.diode_i0_amps,
                                      &r.rated_load_amps,
                                      &r.ripple_rated_rms_volts,
                                      &r.ripple_rated_pp_volts,
                                      &r.model_v_oc_volts,
                                      &r.model_z_out_ohms,
                                      &r.model_droop_rated_volts,
                                      &r.model_ripple_rated_pp_volts,
                                      &r.v_oc_drift_volts_per_hour,
                                      &r.v_oc_drift_stderr_volts_per_hour,
                                      &r.z_out_drift_ohms_per_hour,
                                      &r.z_out_drift_stderr_ohms_per_hour,
                                      &r.ripple_drift_volts_per_hour,
                                      &r.ripple_drift_stderr_volts_per_hour};
    int column = 4;
    for (auto* field : reals) *field = optional_real(s, column++);
    r.verdict = optional_text(s, column++);
    const auto reasons = nlohmann::json::parse(s.column_text(column), nullptr, false);
    if (reasons.is_array()) {
      for (const auto& reason : reasons) r.verdict_reasons.push_back(reason.is_string() ? reason.get<std::string>() : reason.dump());
    }
    rows.push_back(std::move(r));
  }
  return rows;
}

std::vector<SoakTrendRow> load_soak_trend(store::Database& db, std::int64_t run_id) {
  std::vector<SoakTrendRow> rows;
  auto s = db.prepare(
      "SELECT sweep_index, sweep_started_at, elapsed_s, v_oc_volts, z_out_ohms, ripple_rated_pp_volts, "
      "ripple_rated_rms_volts, verdict FROM soak_trend WHERE run_id = :run ORDER BY sweep_index");
  s.bind_int(":run", run_id);
  while (s.step()) {
    SoakTrendRow r;
    r.sweep_index = s.column_int(0);
    r.sweep_started_at = s.column_text(1);
    r.elapsed_s = optional_real(s, 2);
    r.v_oc_volts = optional_real(s, 3);
    r.z_out_ohms = optional_real(s, 4);
    r.ripple_rated_pp_volts = optional_real(s, 5);
    r.ripple_rated_rms_volts = optional_real(s, 6);
    r.verdict = optional_text(s, 7);
    rows.push_back(std::move(r));
  }
  return rows;
}

std::vector<RunEvent> load_events(store::Database& db, std::int64_t run_id) {
  std::vector<RunEvent> events;
  auto s = db.prepare(
      "SELECT event_id, at, level, source, code, message FROM event WHERE run_id = :run ORDER BY at, event_id");
  s.bind_int(":run", run_id);
  while (s.step()) {
    events.push_back({s.column_int(0), s.column_text(1), s.column_text(2), s.column_text(3), s.column_text(4),
                      s.column_text(5)});
  }
  return events;
}

}  // namespace

const SweepResultRow* RunRecord::latest_result() const {
  return sweep_results.empty() ? nullptr : &sweep_results.back();
}

std::vector<const RunPoint*> RunRecord::points_of_sweep(std::int64_t sweep_index) const {
  std::vector<const RunPoint*> out;
  for (const auto& p : points) {
    if (p.sweep_index == sweep_index) out.push_back(&p);
  }
  return out;
}

std::size_t RunRecord::reading_count() const {
  std::size_t count = 0;
  for (const auto& p : points) count += p.readings.size();
  return count;
}

RunRecord load_run_record(const std::filesystem::path& database_path, std::int64_t run_id) {
  store::Database db(database_path, store::Database::Access::read_only);
  // One read transaction, so the run is seen as of one moment even while zoutd writes.
  db.exec("BEGIN");
  RunRecord record;
  record.database_path = database_path;
  record.header = load_header(db, run_id, record.plan_json);
  record.plan_document = nlohmann::json::parse(record.plan_json, nullptr, false);
  try {
    record.plan = parse_plan(record.plan_document, fmt::format("plan of run {} in {}", run_id, database_path.string()));
  } catch (const std::exception& e) {  // ConfigError naming the path and rule, or a JSON error
    record.plan_error = e.what();
  }
  record.points = load_points(db, run_id);
  record.sweep_results = load_sweep_results(db, run_id);
  record.soak_trend = load_soak_trend(db, run_id);
  record.events = load_events(db, run_id);
  db.exec("COMMIT");
  return record;
}

}  // namespace zout::report
