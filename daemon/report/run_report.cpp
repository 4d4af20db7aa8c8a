#include "run_report.h"

#include <fmt/format.h>

#include <algorithm>
#include <chrono>

#include "daemon/report/model_comparison.h"
#include "daemon/store/record_json.h"
#include "daemon/store/sweep_figures.h"

namespace zout::report {
namespace {

std::string number(const std::optional<double>& value) { return value ? fmt::format("{:.6g}", *value) : "-"; }

// "value ± stderr unit", "value unit", or "-".
std::string figure(const std::optional<double>& value, const std::optional<double>& stderr_value, const char* unit) {
  if (!value) return "-";
  if (stderr_value) return fmt::format("{:.6g} ± {:.6g} {}", *value, *stderr_value, unit);
  return fmt::format("{:.6g} {}", *value, unit);
}

nlohmann::json json_of(const std::optional<double>& v) { return v ? nlohmann::json(*v) : nlohmann::json(nullptr); }

enum class Align { left, numbers_right };

// Columns padded to their widest cell, two spaces apart; the first column is left-aligned, the
// others too unless `align` is numbers_right.
std::string table(const std::vector<std::vector<std::string>>& rows, const std::string& indent,
                  Align align = Align::left) {
  std::vector<std::size_t> widths;
  const auto width_of = [](const std::string& s) {
    std::size_t n = 0;
    for (unsigned char c : s) n += (c & 0xC0) != 0x80;  // UTF-8 code points
    return n;
  };
  for (const auto& row : rows) {
    widths.resize(std::max(widths.size(), row.size()));
    for (std::size_t i = 0; i < row.size(); ++i) widths[i] = std::max(widths[i], width_of(row[i]));
  }
  std::string out;
  for (const auto& row : rows) {
    std::string line = indent;
    for (std::size_t i = 0; i < row.size(); ++i) {
      const std::string pad(widths[i] - width_of(row[i]), ' ');
      if (i == 0) {
        line += row[i] + pad;
      } else {
        line += align == Align::left ? "  " + row[i] + pad : "  " + pad + row[i];
      }
    }
    while (!line.empty() && line.back() == ' ') line.pop_back();
    out += line + "\n";
  }
  return out;
}

bool is_notable(const store::StoredEvent& e) { return e.event.level != store::EventLevel::info; }

std::string time_text(const std::optional<store::TimePoint>& time) { return time ? store::format_utc(*time) : "-"; }

std::string set_load_text(const store::PointRecord& p) {
  if (p.set_load_amps) return fmt::format("{:.6g} A", *p.set_load_amps);
  if (p.set_load_ohms) return fmt::format("{:.6g} ohm", *p.set_load_ohms);
  return "-";
}

}  // namespace

std::optional<double> run_duration_s(const store::RunSummary& header) {
  if (!header.started_at || !header.ended_at) return std::nullopt;
  return std::chrono::duration<double>(*header.ended_at - *header.started_at).count();
}

std::string render_text_report(const RunRecord& record) {
  const store::RunSummary& h = record.header;
  std::string out = fmt::format("Run {}: unit {}{}{}\n", h.run_id, h.serial, h.model.empty() ? "" : " (" + h.model + ")",
                                h.slot ? fmt::format(", slot {}", *h.slot) : "");
  const auto duration = run_duration_s(h);
  out += table({{"plan", h.plan_name},
                {"kind", std::string(store::to_string(h.kind))},
                {"station", h.station},
                {"operator", h.operator_name.empty() ? "-" : h.operator_name},
                {"state", std::string(store::to_string(h.state))},
                {"queued", store::format_utc(h.queued_at)},
                {"started", time_text(h.started_at)},
                {"ended", time_text(h.ended_at)},
                {"duration", duration ? fmt::format("{:.3f} s", *duration) : "-"},
                {"sweeps", std::to_string(h.sweeps)},
                {"note", h.note.empty() ? "-" : h.note}},
               "  ");

  const store::SweepResultRecord* r = record.latest_result();
  out += "\nFigures";
  if (!r) {
    out += ": none (no sweep was analysed)\n";
  } else {
    out += fmt::format(" (sweep {}, computed {}; ± one standard error)\n", r->sweep, store::format_utc(r->computed_at));
    out += table({{"V_oc", figure(r->v_oc_volts, std::nullopt, "V")},
                  {"Z_out", figure(r->z_out_ohms, r->z_out_stderr_ohms, "ohm") + fmt::format(" ({} fit points)", r->fit_points)},
                  {"chord Z to rated load", figure(r->z_chord_ohms, std::nullopt, "ohm")},
                  {"cascade R", figure(r->cascade_r_ohms, r->cascade_r_stderr_ohms, "ohm")},
                  {"effective C", figure(r->effective_capacitance_farads, std::nullopt, "F")},
                  {"diode drop", figure(r->diode_drop_volts, std::nullopt, "V")},
                  {"rated load", figure(r->rated_load_amps, std::nullopt, "A")},
                  {"ripple pp at rated load", figure(r->ripple_rated_pp_volts, std::nullopt, "V")},
                  {"ripple rms at rated load", figure(r->ripple_rated_rms_volts, std::nullopt, "V")}},
                 "  ");
  }

  out += "\nCockcroft–Walton model";
  if (const auto drive = cascade_drive(record)) {
    out += fmt::format(" (n = {}, C = {:.6g} F, f = {:.6g} Hz, V_pk = {:.6g} V)\n", drive->stages,
                       drive->capacitance_farads, drive->frequency_hz, drive->amplitude_volts_peak);
  } else {
    out += fmt::format(" (as stored with the result; the plan does not load: {})\n", record.plan_error);
  }
  std::vector<std::vector<std::string>> comparison = {{"quantity", "measured", "model", "difference"}};
  for (const auto& row : compare_with_model(record)) {
    comparison.push_back({row.quantity, row.measured ? number(row.measured) + " " + row.unit : "-",
                          row.model ? number(row.model) + " " + row.unit : "-",
                          row.difference_percent ? fmt::format("{:+.2f} %", *row.difference_percent) : "-"});
  }
  out += table(comparison, "  ", Align::numbers_right);

  out += fmt::format("\nPoints ({})\n", record.points.size());
  std::vector<std::vector<std::string>> points = {
      {"sweep", "step", "set load", "measured A", "DC V", "ripple pp V", "settle s", "settled"}};
  for (const auto& stored : record.points) {
    const store::PointRecord& p = stored.point;
    points.push_back({std::to_string(stored.sweep), std::to_string(stored.step), set_load_text(p),
                      number(p.measured_load_amps), number(p.dc_volts), number(p.ripple_pp_volts),
                      fmt::format("{:.3f}", p.settle_s), p.settled ? "yes" : "NO"});
  }
  out += table(points, "  ", Align::numbers_right);

  if (record.is_soak() && r) {
    out += fmt::format("\nDrift over {} sweeps (least-squares slope per hour ± one standard error)\n",
                       record.sweep_results().size());
    out += table({{"V_oc", figure(r->v_oc_drift_volts_per_hour, r->v_oc_drift_stderr_volts_per_hour, "V/h")},
                  {"Z_out", figure(r->z_out_drift_ohms_per_hour, r->z_out_drift_stderr_ohms_per_hour, "ohm/h")},
                  {"ripple pp", figure(r->ripple_drift_volts_per_hour, r->ripple_drift_stderr_volts_per_hour, "V/h")}},
                 "  ");
  }

  out += "\nVerdict: ";
  if (!r || !r->verdict) {
    out += "none\n";
  } else {
    out += *r->verdict == store::Verdict::pass ? "PASS\n" : "FAIL\n";
    for (const auto& reason : r->verdict_reasons) out += "  - " + reason + "\n";
  }

  const auto notable = std::count_if(record.events.begin(), record.events.end(), is_notable);
  out += fmt::format("\nWarnings and errors ({})\n", notable);
  std::vector<std::vector<std::string>> events;
  for (const auto& e : record.events) {
    if (is_notable(e)) {
      events.push_back({store::format_utc(e.event.at), std::string(store::to_string(e.event.level)), e.event.source,
                        e.event.code, e.event.message});
    }
  }
  out += table(events, "  ");
  return out;
}

nlohmann::json render_json_report(const RunRecord& record) {
  const store::RunSummary& h = record.header;
  nlohmann::json run = store::run_summary_json(h);
  run["duration_s"] = json_of(run_duration_s(h));

  const store::SweepResultRecord* r = record.latest_result();
  nlohmann::json figures = nullptr;
  nlohmann::json drift = nullptr;
  nlohmann::json verdict = {{"verdict", nullptr}, {"reasons", nlohmann::json::array()}};
  if (r) {
    figures = store::sweep_result_json(*r);
    if (record.is_soak()) {
      drift = {{"sweeps", record.sweep_results().size()},
               {"v_oc_volts_per_hour", json_of(r->v_oc_drift_volts_per_hour)},
               {"v_oc_stderr_volts_per_hour", json_of(r->v_oc_drift_stderr_volts_per_hour)},
               {"z_out_ohms_per_hour", json_of(r->z_out_drift_ohms_per_hour)},
               {"z_out_stderr_ohms_per_hour", json_of(r->z_out_drift_stderr_ohms_per_hour)},
               {"ripple_pp_volts_per_hour", json_of(r->ripple_drift_volts_per_hour)},
               {"ripple_pp_stderr_volts_per_hour", json_of(r->ripple_drift_stderr_volts_per_hour)}};
    }
    verdict = {{"verdict", figures.at("verdict")}, {"reasons", r->verdict_reasons}};
  }

  nlohmann::json comparison = nlohmann::json::array();
  for (const auto& row : compare_with_model(record)) {
    comparison.push_back({{"quantity", row.key},
                          {"unit", row.unit},
                          {"measured", json_of(row.measured)},
                          {"model", json_of(row.model)},
                          {"difference_percent", json_of(row.difference_percent)}});
  }

  nlohmann::json points = nlohmann::json::array();
  for (const auto& p : record.points) points.push_back(store::stored_point_json(p, false));

  nlohmann::json events = nlohmann::json::array();
  for (const auto& e : record.events) {
    if (is_notable(e)) events.push_back(store::stored_event_json(e));
  }
  return {{"run", run},     {"figures", figures}, {"model_comparison", comparison}, {"points", points},
          {"drift", drift}, {"verdict", verdict}, {"events", events}};
}

}  // namespace zout::report
