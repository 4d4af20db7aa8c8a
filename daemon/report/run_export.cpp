#include "run_export.h"

#include <fmt/format.h>

#include "daemon/report/run_report.h"

namespace zout::report {
namespace {

// Shortest text that reads back to the same double (fmt's default form).
std::string real(double value) { return fmt::format("{}", value); }
std::string real(const std::optional<double>& value) { return value ? real(*value) : ""; }

nlohmann::json json_of(const std::optional<double>& v) { return v ? nlohmann::json(*v) : nlohmann::json(nullptr); }
nlohmann::json json_of(const std::optional<std::string>& v) { return v ? nlohmann::json(*v) : nlohmann::json(nullptr); }

nlohmann::json sweep_result_json(const SweepResultRow& r) {
  return {{"sweep_id", r.sweep_id},
          {"sweep_index", r.sweep_index},
          {"computed_at", r.computed_at},
          {"fit_points", r.fit_points},
          {"v_oc_volts", json_of(r.v_oc_volts)},
          {"z_out_ohms", json_of(r.z_out_ohms)},
          {"z_out_stderr_ohms", json_of(r.z_out_stderr_ohms)},
          {"z_chord_ohms", json_of(r.z_chord_ohms)},
          {"cascade_r_ohms", json_of(r.cascade_r_ohms)},
          {"cascade_r_stderr_ohms", json_of(r.cascade_r_stderr_ohms)},
          {"effective_capacitance_farads", json_of(r.effective_capacitance_farads)},
          {"diode_drop_volts", json_of(r.diode_drop_volts)},
          {"diode_m", json_of(r.diode_m)},
          {"diode_i0_amps", json_of(r.diode_i0_amps)},
          {"rated_load_amps", json_of(r.rated_load_amps)},
          {"ripple_rated_rms_volts", json_of(r.ripple_rated_rms_volts)},
          {"ripple_rated_pp_volts", json_of(r.ripple_rated_pp_volts)},
          {"model_v_oc_volts", json_of(r.model_v_oc_volts)},
          {"model_z_out_ohms", json_of(r.model_z_out_ohms)},
          {"model_droop_rated_volts", json_of(r.model_droop_rated_volts)},
          {"model_ripple_rated_pp_volts", json_of(r.model_ripple_rated_pp_volts)},
          {"v_oc_drift_volts_per_hour", json_of(r.v_oc_drift_volts_per_hour)},
          {"v_oc_drift_stderr_volts_per_hour", json_of(r.v_oc_drift_stderr_volts_per_hour)},
          {"z_out_drift_ohms_per_hour", json_of(r.z_out_drift_ohms_per_hour)},
          {"z_out_drift_stderr_ohms_per_hour", json_of(r.z_out_drift_stderr_ohms_per_hour)},
          {"ripple_drift_volts_per_hour", json_of(r.ripple_drift_volts_per_hour)},
          {"ripple_drift_stderr_volts_per_hour", json_of(r.ripple_drift_stderr_volts_per_hour)},
          {"verdict", json_of(r.verdict)},
          {"verdict_reasons", r.verdict_reasons}};
}

}  // namespace

const std::vector<std::string>& export_csv_columns() {
  static const std::vector<std::string> columns = {
      "run_id",           "sweep_index",      "step_index",       "point_id",         "set_load_amps",
      "set_load_ohms",    "measured_load_amps", "load_amps",      "dc_volts",         "ripple_rms_volts",
      "ripple_pp_volts",  "settle_s",         "settled",          "point_taken_at",   "reading_seq",
      "instrument_id",    "instrument_role",  "reading_kind",     "reading_value",    "reading_taken_at"};
  return columns;
}

std::vector<std::vector<std::string>> export_reading_rows(const RunRecord& record) {
  std::vector<std::vector<std::string>> rows;
  for (const auto& p : record.points) {
    const std::vector<std::string> point_fields = {
        std::to_string(record.header.run_id), std::to_string(p.sweep_index), std::to_string(p.step_index),
        std::to_string(p.point_id), real(p.set_load_amps), real(p.set_load_ohms), real(p.measured_load_amps),
        real(p.load_amps), real(p.dc_volts), real(p.ripple_rms_volts), real(p.ripple_pp_volts), real(p.settle_s),
        p.settled ? "1" : "0", p.taken_at};
    for (const auto& r : p.readings) {
      std::vector<std::string> fields = point_fields;
      fields.insert(fields.end(), {std::to_string(r.seq), std::to_string(r.instrument_id), r.instrument_role, r.kind,
                                   real(r.value), r.taken_at});
      rows.push_back(std::move(fields));
    }
  }
  return rows;
}

nlohmann::json export_json(const RunRecord& record) {
  nlohmann::json points = nlohmann::json::array();
  for (const auto& p : record.points) {
    nlohmann::json readings = nlohmann::json::array();
    for (const auto& r : p.readings) {
      readings.push_back({{"seq", r.seq},
                          {"instrument_id", r.instrument_id},
                          {"instrument_role", r.instrument_role},
                          {"kind", r.kind},
                          {"value", r.value},
                          {"taken_at", r.taken_at}});
    }
    points.push_back({{"point_id", p.point_id},
                      {"sweep_id", p.sweep_id},
                      {"sweep_index", p.sweep_index},
                      {"step_index", p.step_index},
                      {"set_load_amps", json_of(p.set_load_amps)},
                      {"set_load_ohms", json_of(p.set_load_ohms)},
                      {"measured_load_amps", json_of(p.measured_load_amps)},
                      {"load_amps", json_of(p.load_amps)},
                      {"dc_volts", p.dc_volts},
                      {"ripple_rms_volts", json_of(p.ripple_rms_volts)},
                      {"ripple_pp_volts", json_of(p.ripple_pp_volts)},
                      {"settle_s", p.settle_s},
                      {"settled", p.settled},
                      {"step_started_at", p.step_started_at},
                      {"taken_at", p.taken_at},
                      {"readings", readings}});
  }
  nlohmann::json results = nlohmann::json::array();
  for (const auto& r : record.sweep_results) results.push_back(sweep_result_json(r));
  nlohmann::json events = nlohmann::json::array();
  for (const auto& e : record.events) {
    events.push_back({{"event_id", e.event_id}, {"at", e.at}, {"level", e.level}, {"source", e.source},
                      {"code", e.code}, {"message", e.message}});
  }
  nlohmann::json run = render_json_report(record)["run"];
  return {{"run", run}, {"plan", record.plan_document}, {"points", points}, {"sweep_results", results},
          {"events", events}};
}

}  // namespace zout::report
