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

}  // namespace zout::store
