#include "record_json.h"

#include <nlohmann/json.hpp>

#include "daemon/store/sweep_figures.h"

namespace zout::store {
namespace {

nlohmann::json time_or_null(const std::optional<TimePoint>& time) {
  return time ? nlohmann::json(format_utc(*time)) : nlohmann::json();
}

}  // namespace

nlohmann::json run_summary_json(const RunSummary& run) {
  nlohmann::json out = {{"run_id", run.run_id},
          {"station", run.station},
          {"serial", run.serial},
          {"model", run.model},
          {"plan_name", run.plan_name},
          {"kind", std::string(to_string(run.kind))},
          {"state", std::string(to_string(run.state))},
          {"final", is_final(run.state)},
          {"queued_at", format_utc(run.queued_at)},
          {"started_at", time_or_null(run.started_at)},
          {"ended_at", time_or_null(run.ended_at)},
          {"operator", run.operator_name},
          {"note", run.note},
          {"slot", run.slot ? nlohmann::json(*run.slot) : nlohmann::json()},
          {"sweeps", run.sweeps}};
  // The latest result's figures sit beside the run's own fields, as in the run_summary view.
  nlohmann::json figures = sweep_result_json(run.latest_result.value_or(SweepResultRecord{}));
  out["result_sweep"] = run.latest_result ? figures.at("sweep") : nlohmann::json();
  out["result_computed_at"] = run.latest_result ? figures.at("computed_at") : nlohmann::json();
  figures.erase("sweep");
  figures.erase("computed_at");
  if (!run.latest_result) figures["fit_points"] = nullptr;
  out.update(figures);
  return out;
}

nlohmann::json stored_point_json(const StoredPoint& stored, bool with_readings) {
  const PointRecord& p = stored.point;
  const auto real = [](const std::optional<double>& v) { return v ? nlohmann::json(*v) : nlohmann::json(); };
  nlohmann::json out = {{"point_id", stored.point_id},
                        {"sweep_id", p.sweep_id},
                        {"sweep", stored.sweep},
                        {"step", stored.step},
                        {"set_load_amps", real(p.set_load_amps)},
                        {"set_load_ohms", real(p.set_load_ohms)},
                        {"measured_load_amps", real(p.measured_load_amps)},
                        {"load_amps", real(stored.load_amps)},
                        {"dc_volts", p.dc_volts},
                        {"ripple_rms_volts", real(p.ripple_rms_volts)},
                        {"ripple_pp_volts", real(p.ripple_pp_volts)},
                        {"settle_s", p.settle_s},
                        {"settled", p.settled},
                        {"step_started_at", format_utc(p.step_started_at)},
                        {"taken_at", format_utc(p.taken_at)}};
  if (with_readings) {
    nlohmann::json readings = nlohmann::json::array();
    for (const auto& r : stored.readings) {
      readings.push_back({{"seq", r.seq},
                          {"instrument_id", r.reading.instrument_id},
                          {"instrument_role", r.instrument_role},
                          {"kind", r.reading.kind},
                          {"value", r.reading.value},
                          {"taken_at", format_utc(r.reading.taken_at)}});
    }
    out["readings"] = readings;
  }
  return out;
}

nlohmann::json stored_event_json(const StoredEvent& stored) {
  const EventRecord& e = stored.event;
  return {{"event_id", stored.event_id},
          {"at", format_utc(e.at)},
          {"level", std::string(to_string(e.level))},
          {"source", e.source},
          {"code", e.code},
          {"message", e.message},
          {"run_id", e.run_id ? nlohmann::json(*e.run_id) : nlohmann::json()}};
}

}  // namespace zout::store
