#include "run_export.h"

#include <fmt/format.h>

#include "daemon/report/run_report.h"
#include "daemon/store/record_json.h"
#include "daemon/store/sweep_figures.h"

namespace zout::report {
namespace {

// Shortest text that reads back to the same double (fmt's default form).
std::string real(double value) { return fmt::format("{}", value); }
std::string real(const std::optional<double>& value) { return value ? real(*value) : ""; }

}  // namespace

const std::vector<std::string>& export_csv_columns() {
  static const std::vector<std::string> columns = {
      "run_id",           "sweep",            "step",             "point_id",         "set_load_amps",
      "set_load_ohms",    "measured_load_amps", "load_amps",      "dc_volts",         "ripple_rms_volts",
      "ripple_pp_volts",  "settle_s",         "settled",          "point_taken_at",   "reading_seq",
      "instrument_id",    "instrument_role",  "reading_kind",     "reading_value",    "reading_taken_at"};
  return columns;
}

std::vector<std::vector<std::string>> export_reading_rows(const RunRecord& record) {
  std::vector<std::vector<std::string>> rows;
  for (const auto& stored : record.points) {
    const store::PointRecord& p = stored.point;
    const std::vector<std::string> point_fields = {
        std::to_string(record.header.run_id), std::to_string(stored.sweep), std::to_string(stored.step),
        std::to_string(stored.point_id), real(p.set_load_amps), real(p.set_load_ohms), real(p.measured_load_amps),
        real(stored.load_amps), real(p.dc_volts), real(p.ripple_rms_volts), real(p.ripple_pp_volts), real(p.settle_s),
        p.settled ? "1" : "0", store::format_utc(p.taken_at)};
    for (const auto& r : stored.readings) {
      std::vector<std::string> fields = point_fields;
      fields.insert(fields.end(), {std::to_string(r.seq), std::to_string(r.reading.instrument_id), r.instrument_role,
                                   r.reading.kind, real(r.reading.value), store::format_utc(r.reading.taken_at)});
      rows.push_back(std::move(fields));
    }
  }
  return rows;
}

nlohmann::json export_json(const RunRecord& record) {
  nlohmann::json points = nlohmann::json::array();
  for (const auto& p : record.points) points.push_back(store::stored_point_json(p, true));
  nlohmann::json results = nlohmann::json::array();
  for (const auto* r : record.sweep_results()) {
    auto result = store::sweep_result_json(*r);
    result["sweep_id"] = r->sweep_id;
    results.push_back(result);
  }
  nlohmann::json events = nlohmann::json::array();
  for (const auto& e : record.events) events.push_back(store::stored_event_json(e));
  nlohmann::json run = render_json_report(record)["run"];
  return {{"run", run}, {"plan", record.plan_document}, {"points", points}, {"sweep_results", results},
          {"events", events}};
}

}  // namespace zout::report
