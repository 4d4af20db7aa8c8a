#include "run_report.h"

#include <fmt/format.h>

#include <algorithm>
#include <chrono>

#include "daemon/report/model_comparison.h"
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

// The unit symbol of a model comparison row (whose JSON unit is plain ASCII).
std::string unit_symbol(const std::string& json_unit) { return json_unit == "ohm" ? "Ω" : json_unit; }

nlohmann::json json_of(const std::optional<double>& v) { return v ? nlohmann::json(*v) : nlohmann::json(nullptr); }
nlohmann::json json_of(const std::optional<std::string>& v) { return v ? nlohmann::json(*v) : nlohmann::json(nullptr); }

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

bool is_notable(const RunEvent& e) { return e.level == "warning" || e.level == "error"; }

std::string set_load_text(const RunPoint& p) {
  if (p.set_load_amps) return number(p.set_load_amps, "A");
  return number(p.set_load_ohms, "Ω");
}

}  // namespace

std::optional<double> run_duration_s(const RunHeader& header) {
  if (!header.started_at || !header.ended_at) return std::nullopt;
  const auto start = text::parse_utc_text(*header.started_at);
  const auto end = text::parse_utc_text(*header.ended_at);
  if (!start || !end) return std::nullopt;
  return std::chrono::duration<double>(*end - *start).count();
}

std::string render_text_report(const RunRecord& record, text::TimeZoneChoice zone) {
  namespace quantity = text::quantity;
  const RunHeader& h = record.header;
  const auto shown_time = [zone](const std::optional<std::string>& utc_text) {
    return text::display_time(utc_text.value_or(""), zone);
  };
  std::string out = fmt::format("Run {}: unit {}{}{}\n", h.run_id, h.serial, h.model.empty() ? "" : " (" + h.model + ")",
                                h.slot ? fmt::format(", slot {}", *h.slot) : "");
  const auto duration = run_duration_s(h);
  out += table({{"plan", h.plan_name},
                {"kind", h.kind},
                {"station", h.station},
                {"operator", or_mark(h.operator_name)},
                {"state", h.state},
                {"queued", shown_time(h.queued_at)},
                {"started", shown_time(h.started_at)},
                {"ended", shown_time(h.ended_at)},
                {"duration", duration ? text::clock_time(*duration) : std::string(text::missing_value_mark)},
                {"sweeps", std::to_string(h.sweeps)},
                {"note", or_mark(h.note)}},
               "  ");

  const SweepResultRow* r = record.latest_result();
  out += "\nFigures";
  if (!r) {
    out += ": none (no sweep was analysed)\n";
  } else {
    out += fmt::format(" (sweep {}, computed {}; ± one standard error)\n", r->sweep_index, shown_time(r->computed_at));
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
    const std::string unit = unit_symbol(row.unit);
    comparison.push_back({row.quantity, number(row.measured, unit.c_str()), number(row.model, unit.c_str()),
                          row.difference_percent ? fmt::format("{:+.2f} %", *row.difference_percent)
                                                 : std::string(text::missing_value_mark)});
  }
  out += table(comparison, "  ", Align::numbers_right);

  out += fmt::format("\nPoints ({})\n", record.points.size());
  std::vector<std::vector<std::string>> points = {
      {"sweep", "step", "set load", "measured load", "DC output", "ripple pp", "settled in", "settled"}};
  for (const auto& p : record.points) {
    points.push_back({std::to_string(p.sweep_index), std::to_string(p.step_index), set_load_text(p),
                      number(p.measured_load_amps, "A"), number(p.dc_volts, "V"), number(p.ripple_pp_volts, "V"),
                      number(p.settle_s, "s"), p.settled ? "yes" : "NO"});
  }
  out += table(points, "  ", Align::numbers_right);

  if (h.kind == "soak" && r) {
    out += fmt::format("\nDrift over {} sweeps (least-squares slope per hour ± one standard error)\n",
                       record.soak_trend.size());
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
    out += *r->verdict == "pass" ? "PASS\n" : "FAIL\n";
    for (const auto& reason : r->verdict_reasons) out += "  - " + reason + "\n";
  }

  const auto notable = std::count_if(record.events.begin(), record.events.end(), is_notable);
  out += fmt::format("\nWarnings and errors ({})\n", notable);
  std::vector<std::vector<std::string>> events;
  for (const auto& e : record.events) {
    if (is_notable(e)) events.push_back({shown_time(e.at), e.level, e.source, e.code, e.message});
  }
  out += table(events, "  ");
  return out;
}

nlohmann::json render_json_report(const RunRecord& record) {
  const RunHeader& h = record.header;
  nlohmann::json run = {{"run_id", h.run_id},
                        {"serial", h.serial},
                        {"model", h.model},
                        {"slot", h.slot ? nlohmann::json(*h.slot) : nlohmann::json(nullptr)},
                        {"plan_name", h.plan_name},
                        {"kind", h.kind},
                        {"station", h.station},
                        {"operator", h.operator_name},
                        {"note", h.note},
                        {"state", h.state},
                        {"queued_at", h.queued_at},
                        {"started_at", json_of(h.started_at)},
                        {"ended_at", json_of(h.ended_at)},
                        {"duration_s", json_of(run_duration_s(h))},
                        {"sweeps", h.sweeps}};

  const SweepResultRow* r = record.latest_result();
  nlohmann::json figures = nullptr;
  nlohmann::json drift = nullptr;
  nlohmann::json verdict = {{"verdict", nullptr}, {"reasons", nlohmann::json::array()}};
  if (r) {
    figures = {{"sweep_index", r->sweep_index},
               {"computed_at", r->computed_at},
               {"fit_points", r->fit_points},
               {"v_oc_volts", json_of(r->v_oc_volts)},
               {"z_out_ohms", json_of(r->z_out_ohms)},
               {"z_out_stderr_ohms", json_of(r->z_out_stderr_ohms)},
               {"z_chord_ohms", json_of(r->z_chord_ohms)},
               {"cascade_r_ohms", json_of(r->cascade_r_ohms)},
               {"cascade_r_stderr_ohms", json_of(r->cascade_r_stderr_ohms)},
               {"effective_capacitance_farads", json_of(r->effective_capacitance_farads)},
               {"diode_drop_volts", json_of(r->diode_drop_volts)},
               {"rated_load_amps", json_of(r->rated_load_amps)},
               {"ripple_rated_pp_volts", json_of(r->ripple_rated_pp_volts)},
               {"ripple_rated_rms_volts", json_of(r->ripple_rated_rms_volts)}};
    if (h.kind == "soak") {
      drift = {{"sweeps", record.soak_trend.size()},
               {"v_oc_volts_per_hour", json_of(r->v_oc_drift_volts_per_hour)},
               {"v_oc_stderr_volts_per_hour", json_of(r->v_oc_drift_stderr_volts_per_hour)},
               {"z_out_ohms_per_hour", json_of(r->z_out_drift_ohms_per_hour)},
               {"z_out_stderr_ohms_per_hour", json_of(r->z_out_drift_stderr_ohms_per_hour)},
               {"ripple_pp_volts_per_hour", json_of(r->ripple_drift_volts_per_hour)},
               {"ripple_pp_stderr_volts_per_hour", json_of(r->ripple_drift_stderr_volts_per_hour)}};
    }
    verdict = {{"verdict", json_of(r->verdict)}, {"reasons", r->verdict_reasons}};
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
  for (const auto& p : record.points) {
    points.push_back({{"sweep_index", p.sweep_index},
                      {"step_index", p.step_index},
                      {"set_load_amps", json_of(p.set_load_amps)},
                      {"set_load_ohms", json_of(p.set_load_ohms)},
                      {"measured_load_amps", json_of(p.measured_load_amps)},
                      {"dc_volts", p.dc_volts},
                      {"ripple_pp_volts", json_of(p.ripple_pp_volts)},
                      {"settle_s", p.settle_s},
                      {"settled", p.settled}});
  }

  nlohmann::json events = nlohmann::json::array();
  for (const auto& e : record.events) {
    if (!is_notable(e)) continue;
    events.push_back({{"at", e.at}, {"level", e.level}, {"source", e.source}, {"code", e.code}, {"message", e.message}});
  }
  return {{"run", run},     {"figures", figures}, {"model_comparison", comparison}, {"points", points},
          {"drift", drift}, {"verdict", verdict}, {"events", events}};
}

}  // namespace zout::report
