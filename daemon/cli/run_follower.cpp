#include "run_follower.h"

#include <fmt/format.h>

#include <algorithm>
#include <chrono>
#include <ostream>

#include "daemon/cli/exit_codes.h"
#include "daemon/store/run_state.h"
#include "daemon/text/missing_value.h"
#include "daemon/text/quantity_names.h"
#include "daemon/text/si_text.h"
#include "daemon/text/time_text.h"

namespace zout::cli {
namespace {

using nlohmann::json;

double now_s() {
  return std::chrono::duration<double>(std::chrono::steady_clock::now().time_since_epoch()).count();
}

std::optional<double> number_at(const json& object, const char* key) {
  if (!object.contains(key) || !object.at(key).is_number()) return std::nullopt;
  return object.at(key).get<double>();
}

}  // namespace

int exit_status_for(const std::map<std::int64_t, std::string>& states) {
  int code = exit_ok;
  for (const auto& [id, word] : states) {
    const auto state = store::run_state_named(word);
    if (state == store::RunState::failed) {
      code = exit_unit_failed;
    } else if (state != store::RunState::passed) {
      return exit_run_incomplete;  // aborted, interrupted, error, or a state that never ended
    }
  }
  return code;
}

RunFollower::RunFollower(ControlClient& client, std::ostream& out, bool json_lines, bool terminal,
                         text::TimeZoneChoice zone)
    : client_(client), out_(out), json_lines_(json_lines), terminal_(terminal && !json_lines), zone_(zone) {}

// " at <time>" for the UTC text at `key`, in the follower's time zone; empty when there is none.
std::string RunFollower::at_text(const json& object, const char* key) const {
  if (!object.contains(key) || !object.at(key).is_string()) return "";
  return " at " + text::display_time(object.at(key).get<std::string>(), zone_);
}

std::map<std::int64_t, std::string> RunFollower::follow(const std::vector<std::int64_t>& run_ids) {
  // Subscribe first, then read each run: nothing can happen unseen in between.
  client_.call("events.subscribe", json::object());
  for (const auto id : run_ids) {
    const json run = client_.call("run.get", {{"run_id", id}});
    Followed f;
    f.serial = run.value("serial", "");
    f.state = run.value("state", "");
    f.points_done = run.value("points", 0);
    const json plan_progress = run.value("progress", json());
    if (plan_progress.is_object()) {
      f.step_count = plan_progress.value("step_count", 0);
      f.sweep_count = plan_progress.value("sweep_count", 1);
    }
    if (f.state == "running") f.started_s = now_s();
    runs_[id] = f;
    if (store::is_final_state_word(f.state) && !json_lines_) {
      out_ << fmt::format("run {} {}: already ended {}{}\n", id, f.serial, f.state, at_text(run, "ended_at"));
    } else if (store::is_final_state_word(f.state)) {
      out_ << json{{"method", "run.state"}, {"params", {{"run_id", id}, {"state", f.state}}}}.dump() << "\n";
    }
  }
  const auto all_ended = [&] {
    return std::all_of(runs_.begin(), runs_.end(), [](const auto& r) { return store::is_final_state_word(r.second.state); });
  };
  while (!all_ended()) {
    const auto message = client_.next_notification(std::chrono::milliseconds(500));
    if (message) on_notification(*message);
    if (terminal_) draw_bar();
    out_.flush();
  }
  clear_bar();
  std::map<std::int64_t, std::string> states;
  for (const auto& [id, f] : runs_) states[id] = f.state;
  return states;
}

void RunFollower::on_notification(const json& message) {
  const std::string method = message.value("method", "");
  const json params = message.value("params", json::object());
  const auto id = params.value("run_id", std::int64_t{0});
  auto it = runs_.find(id);
  if (it == runs_.end()) return;  // another run's news
  if (json_lines_) {
    out_ << message.dump() << "\n";
  }
  Followed& f = it->second;
  if (method == "run.state") {
    f.state = params.value("state", f.state);
    if (f.state == "running") {
      f.started_s = now_s();
      current_ = id;
      if (!json_lines_) {
        clear_bar();
        out_ << fmt::format("run {} {}: running{}\n", id, f.serial, at_text(params, "at"));
      }
    }
    if (store::is_final_state_word(f.state) && !json_lines_) print_end(id, params);
  } else if (method == "point") {
    f.points_done += 1;
    f.step_count = params.value("step_count", f.step_count);
    f.sweep_count = params.value("sweep_count", f.sweep_count);
    current_ = id;
    if (!json_lines_) print_point(id, params);
  } else if (method == "sweep.result" && !json_lines_) {
    print_sweep(id, params);
  } else if (method == "event" && !json_lines_) {
    clear_bar();
    out_ << fmt::format("run {} {}: {} {}: {}\n", id, f.serial, params.value("level", ""), params.value("code", ""),
                        params.value("message", ""));
  }
}

void RunFollower::print_point(std::int64_t id, const json& p) {
  clear_bar();
  const Followed& f = runs_[id];
  std::string load = p.contains("set_amps") ? text::si_text(p.at("set_amps").get<double>(), "A", 3)
                                            : text::si_text(p.value("set_ohms", 0.0), "Ω", 3);
  std::string line = fmt::format("run {} {}  sweep {}/{} step {:>2}/{}  load {:>9}  {:>9}", id, f.serial,
                                 p.value("sweep", 0), p.value("sweep_count", 0), p.value("step", 0),
                                 p.value("step_count", 0), load, text::si_text(p.value("dc_volts", 0.0), "V", 5));
  if (auto ripple = number_at(p, "ripple_pp_volts")) line += fmt::format("  ripple {:>9} pp", text::si_text(*ripple, "V", 3));
  line += fmt::format("  settled in {:.2f} s", p.value("settle_s", 0.0));
  if (!p.value("settled", true)) line += " (NOT settled: max_s ran out)";
  if (!terminal_) line += "  " + bar_text(f, 10);  // no bar redrawn in place: progress on each line
  out_ << line << "\n";
}

void RunFollower::print_sweep(std::int64_t id, const json& r) {
  clear_bar();
  const Followed& f = runs_[id];
  std::string line = fmt::format("run {} {}  sweep {}: {} {}  {} {}", id, f.serial, r.value("sweep", 0),
                                 text::quantity::v_oc, text::si_text(number_at(r, "v_oc_volts"), "V", 5),
                                 text::quantity::z_out,
                                 text::si_with_uncertainty(number_at(r, "z_out_ohms"), number_at(r, "z_out_stderr_ohms"),
                                                           "Ω", 3));
  line += fmt::format("  {} at rated load {}", text::quantity::ripple_pp,
                      text::si_text(number_at(r, "ripple_rated_pp_volts"), "V", 3));
  if (auto drift = number_at(r, "v_oc_drift_volts_per_hour")) {
    line += fmt::format("  {} {}", text::quantity::v_oc_drift, text::si_text(*drift, "V/h", 3));
  }
  line += fmt::format("  → {}", r.value("verdict", "?"));
  out_ << line << "\n";
  for (const auto& reason : r.value("verdict_reasons", json::array())) out_ << "    reason: " << reason.get<std::string>() << "\n";
  for (const auto& alarm : r.value("alarms", json::array())) out_ << "    drift alarm: " << alarm.get<std::string>() << "\n";
}

void RunFollower::print_end(std::int64_t id, const json& params) {
  clear_bar();
  const Followed& f = runs_[id];
  std::string line = fmt::format("run {} {}: {}{}", id, f.serial, f.state, at_text(params, "at"));
  if (params.contains("reason") && params.at("reason").is_string()) line += " — " + params.at("reason").get<std::string>();
  out_ << line << "\n";
}

std::string RunFollower::bar_text(const Followed& f, int width) {
  const int total = std::max(1, f.step_count * f.sweep_count);
  const int done = std::min(f.points_done, total);
  const double fraction = static_cast<double>(done) / total;
  const int filled = static_cast<int>(fraction * width);
  const double elapsed = f.started_s >= 0.0 ? now_s() - f.started_s : 0.0;
  const std::string remaining = done > 0 ? "~" + text::clock_time(elapsed / fraction - elapsed)
                                         : std::string(text::missing_value_mark);
  return fmt::format("[{}{}] {:3.0f}%  elapsed {}  remaining {}", std::string(static_cast<std::size_t>(filled), '#'),
                     std::string(static_cast<std::size_t>(width - filled), '.'), 100.0 * fraction,
                     text::clock_time(elapsed), remaining);
}

void RunFollower::draw_bar() {
  auto it = runs_.find(current_);
  if (it == runs_.end() || it->second.state != "running" || it->second.step_count == 0) return;
  const Followed& f = it->second;
  const int done = f.points_done;
  const int sweep = std::min(f.sweep_count, done / std::max(1, f.step_count) + 1);
  const int step = std::min(f.step_count, done % std::max(1, f.step_count) + 1);
  out_ << fmt::format("\r\033[K{} run {} {}  sweep {}/{} step {}/{}", bar_text(f, 24), current_, f.serial, sweep,
                      f.sweep_count, step, f.step_count);
  bar_shown_ = true;
}

void RunFollower::clear_bar() {
  if (bar_shown_) out_ << "\r\033[K";
  bar_shown_ = false;
}

}  // namespace zout::cli
