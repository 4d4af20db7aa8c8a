#include "run_report.h"

#include <fmt/format.h>

#include <algorithm>
#include <chrono>

#include "daemon/report/model_comparison.h"
#include "daemon/store/record_json.h"
#include "daemon/store/sweep_figures.h"
#include "daemon/text/missing_value.h"
#include "daemon/text/quantity_names.h"
#include "daemon/text/si_text.h"

namespace zout::report {
namespace {

// Significant digits of every number in the text report.
constexpr int digits = 4;

// "value unit" with its SI prefix, or the missing-value mark.
std::string number(const std::optional<double>& value, const char* unit) { return text::si_text(value, unit, digits); }

// "value ± stderr" both with prefix and unit, "value unit", or the missing-value mark.
std::string figure(const std::optional<double>& value, const std::optional<double>& stderr_value, const char* unit) {
  return text::si_with_uncertainty(value, stderr_value, unit, digits);
}

// Text a person typed (operator, note), or the missing-value mark when there is none.
std::string or_mark(const std::string& words) { return words.empty() ? std::string(text::missing_value_mark) : words; }

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

std::string set_load_text(const store::PointRecord& p) {
  if (p.set_load_amps) return number(p.set_load_amps, "A");
  return number(p.set_load_ohms, "Ω");
}

}  // namespace

std::optional<double> run_duration_s(const store::RunSummary& header) {
  if (!header.started_at || !header.ended_at) return std::nullopt;
  return std::chrono::duration<double>(*header.ended_at - *header.started_at).count();
}

std::string render_text_report(const RunRecord& record, text::TimeZoneChoice zone) {
  namespace quantity = text::quantity;
  const store::RunSummary& h = record.header;
  const auto shown_time = [zone](const std::optional<store::TimePoint>& time) {
    return time ? text::display_time(*time, zone) : std::string(text::missing_value_mark);
  };
  std::string out = fmt::format("Run {}: unit {}{}{}\n", h.run_id, h.serial, h.model.empty() ? "" : " (" + h.model + ")",
                                h.slot ? fmt::format(", slot {}", *h.slot) : "");
  const auto duration = run_duration_s(h);
  out += table({{"plan", h.plan_name},
                {"kind", std::string(store::to_string(h.kind))},
                {"station", h.station},
                {"operator", or_mark(h.operator_name)},
                {"state", std::string(store::to_string(h.state))},
                {"queued", shown_time(h.queued_at)},
                {"started", shown_time(h.started_at)},
                {"ended", shown_time(h.ended_at)},
                {"duration", duration ? text::clock_time(*duration) : std::string(text::missing_value_mark)},
                {"sweeps", std::to_string(h.sweeps)},
                {"note", or_mark(h.note)}},
               "  ");

  const store::SweepResultRecord* r = record.latest_result();
  out += "\nFigures";
  if (!r) {
    out += ": none (no sweep was analysed)\n";
  } else {
    out += fmt::format(" (sweep {}, computed {}; ± one standard error)\n", r->sweep, shown_time(r->computed_at));
    out += table({{quantity::v_oc, number(r->v_oc_volts, "V")},
                  {quantity::z_out, figure(r->z_out_ohms, r->z_out_stderr_ohms, "Ω") +
                                        fmt::format(" ({} fit points)", r->fit_points)},
                  {"chord Z to rated load", number(r->z_chord_ohms, "Ω")},
                  {"cascade R", figure(r->cascade_r_ohms, r->cascade_r_stderr_ohms, "Ω")},
                  {quantity::effective_capacitance, number(r->effective_capacitance_farads, "F")},
                  {quantity::diode_drop, number(r->diode_drop_volts, "V")},
                  {"rated load", number(r->rated_load_amps, "A")},
                  {std::string(quantity::ripple_pp) + " at rated load", number(r->ripple_rated_pp_volts, "V")},
                  {"ripple rms at rated load", number(r->ripple_rated_rms_volts, "V")}},
                 "  ");
  }

  out += "\nCockcroft–Walton model";
  if (const auto drive = cascade_drive(record)) {
    out += fmt::format(" (n = {}, C = {}, f = {}, V_pk = {})\n", drive->stages,
                       text::si_text(drive->capacitance_farads, "F", digits), text::si_text(drive->frequency_hz, "Hz", digits),
                       text::si_text(drive->amplitude_volts_peak, "V", digits));
  } else {
    out += fmt::format(" (as stored with the result; the plan does not load: {})\n", record.plan_error);
  }
  std::vector<std::vector<std::string>> comparison = {{"quantity", "measured", "model", "difference"}};
  for (const auto& row : compare_with_model(record)) {
    const std::string& unit = row.unit;
    comparison.push_back({row.quantity, number(row.measured, unit.c_str()), number(row.model, unit.c_str()),
                          row.difference_percent ? fmt::format("{:+.2f} %", *row.difference_percent)
                                                 : std::string(text::missing_value_mark)});
  }
  out += table(comparison, "  ", Align::numbers_right);

  out += fmt::format("\nPoints ({})\n", record.points.size());
  std::vector<std::vector<std::string>> points = {
      {"sweep", "step", "set load", "measured load", "DC output", "ripple pp", "settled in", "settled"}};
  for (const auto& stored : record.points) {
    const store::PointRecord& p = stored.point;
    points.push_back({std::to_string(stored.sweep), std::to_string(stored.step), set_load_text(p),
                      number(p.measured_load_amps, "A"), number(p.dc_volts, "V"), number(p.ripple_pp_volts, "V"),
                      number(p.settle_s, "s"), p.settled ? "yes" : "NO"});
  }
  out += table(points, "  ", Align::numbers_right);

  if (record.is_soak() && r) {
    out += fmt::format("\nDrift over {} sweeps (least-squares slope per hour ± one standard error)\n",
                       record.sweep_results().size());
    out += table({{quantity::v_oc_drift, figure(r->v_oc_drift_volts_per_hour, r->v_oc_drift_stderr_volts_per_hour, "V/h")},
                  {quantity::z_out_drift, figure(r->z_out_drift_ohms_per_hour, r->z_out_drift_stderr_ohms_per_hour, "Ω/h")},
                  {quantity::ripple_drift,
                   figure(r->ripple_drift_volts_per_hour, r->ripple_drift_stderr_volts_per_hour, "V/h")}},
                 "  ");
  }

  out += "\nVerdict: ";
  if (!r || !r->verdict) {
    out += "none\n";
  } else {
    out += std::string(store::to_string(*r->verdict)) + "\n";  // the verdict's one word set: pass | fail
    for (const auto& reason : r->verdict_reasons) out += "  - " + reason + "\n";
  }

  const auto notable = std::count_if(record.events.begin(), record.events.end(), is_notable);
  out += fmt::format("\nWarnings and errors ({})\n", notable);
  std::vector<std::vector<std::string>> events;
  for (const auto& e : record.events) {
    if (is_notable(e)) {
      events.push_back({shown_time(e.event.at), std::string(store::to_string(e.event.level)), e.event.source,
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
