#include "tests/support/fake_bench.h"

#include <fmt/format.h>

#include <algorithm>
#include <stdexcept>

#include "drivers/transport/io_error.h"

namespace zout::test {
namespace {

const char* on_off(bool on) { return on ? "on" : "off"; }

// The load reports an overload as an IoError(protocol), like ScpiLoad.
double load_value(const ScpiNumber& reading, const char* what) {
  if (!reading.is_number()) throw IoError(IoErrorKind::protocol, fmt::format("load: {} reading is overload", what));
  return reading.value;
}

std::string name_of(const std::string& text) { return text.substr(0, text.find(' ')); }

}  // namespace

FakeBench::FakeBench(bool with_switch) : FakeBench(with_switch, Unit{}) {}

FakeBench::FakeBench(bool with_switch, Unit unit) : with_switch_(with_switch), unit_(unit) {}

void FakeBench::inject(const std::string& command, FakeFault fault, int call, int times) {
  std::lock_guard lock(mutex_);
  rules_.push_back({command, call, call + times - 1, fault});
}

void FakeBench::inject_reading(const std::string& command, double value, int call, int times) {
  std::lock_guard lock(mutex_);
  rules_.push_back({command, call, call + times - 1, value});
}

void FakeBench::before(const std::string& command, int call, std::function<void()> action) {
  std::lock_guard lock(mutex_);
  actions_[{command, call}] = std::move(action);
}

void FakeBench::push_error(const std::string& role, ErrorEntry entry) {
  std::lock_guard lock(mutex_);
  error_queues_[role].push_back(std::move(entry));
}

void FakeBench::set_unit(const Unit& unit) {
  std::lock_guard lock(mutex_);
  unit_ = unit;
}

std::vector<std::string> FakeBench::commands() const {
  std::lock_guard lock(mutex_);
  return commands_;
}

std::vector<std::string> FakeBench::last_safe_state_commands() const {
  std::lock_guard lock(mutex_);
  const auto marker = std::find(commands_.rbegin(), commands_.rend(), "bench.enter_safe_state");
  return {marker.base(), commands_.end()};
}

int FakeBench::calls(const std::string& command) const {
  std::lock_guard lock(mutex_);
  const auto it = calls_.find(command);
  return it == calls_.end() ? 0 : it->second;
}

bool FakeBench::in_safe_state() const {
  std::lock_guard lock(mutex_);
  return !load_on_ && !source_on_ && !closed_slot_;
}

bool FakeBench::source_output_on() const {
  std::lock_guard lock(mutex_);
  return source_on_;
}

bool FakeBench::load_input_on() const {
  std::lock_guard lock(mutex_);
  return load_on_;
}

std::optional<int> FakeBench::closed_slot() const {
  std::lock_guard lock(mutex_);
  return closed_slot_;
}

std::optional<FakeBench::Effect> FakeBench::enter(const std::string& text) {
  const std::string name = name_of(text);
  std::function<void()> action;
  int call = 0;
  {
    std::lock_guard lock(mutex_);
    call = ++calls_[name];
    const auto it = actions_.find({name, call});
    if (it != actions_.end()) action = it->second;
  }
  if (action) action();
  std::lock_guard lock(mutex_);
  const auto rule = std::find_if(rules_.begin(), rules_.end(), [&](const Rule& r) {
    return r.command == name && call >= r.first_call && call <= r.last_call;
  });
  if (rule == rules_.end()) {
    commands_.push_back(text);
    return std::nullopt;
  }
  if (const auto* fault = std::get_if<FakeFault>(&rule->effect)) {
    if (*fault == FakeFault::drop) {
      commands_.push_back(text + " [drop]");
      throw IoError(IoErrorKind::disconnected, fmt::format("{}: link dropped (scripted, call {})", name, call));
    }
    if (*fault == FakeFault::stall) {
      commands_.push_back(text + " [stall]");
      throw IoError(IoErrorKind::timeout, fmt::format("{}: no reply (scripted stall, call {})", name, call));
    }
  }
  commands_.push_back(text);
  return rule->effect;
}

double FakeBench::load_amps_locked() const {
  if (!load_on_ || !source_on_ || (with_switch_ && !closed_slot_)) return 0.0;
  if (load_mode_ == LoadMode::constant_current) return set_amps_;
  return unit_.open_circuit_volts / (unit_.source_ohms + set_ohms_);
}

double FakeBench::settled_volts_locked() const {
  if (!source_on_ || (with_switch_ && !closed_slot_)) return 0.0;
  return std::max(0.0, unit_.open_circuit_volts - unit_.source_ohms * load_amps_locked());
}

double FakeBench::dc_reading_locked() {
  output_volts_ += (settled_volts_locked() - output_volts_) * unit_.approach;
  return output_volts_;
}

ScpiNumber FakeBench::reading(const std::optional<Effect>& effect, double model_value) const {
  if (effect && std::holds_alternative<FakeFault>(*effect)) {
    return {ScpiNumber::Kind::not_a_number, 0.0};  // only overload reaches here
  }
  if (effect) return {ScpiNumber::Kind::number, std::get<double>(*effect)};
  return {ScpiNumber::Kind::number, model_value};
}

// --- Bench.

std::vector<ConnectedInstrument> FakeBench::connect() {
  std::vector<ConnectedInstrument> found;
  for (const auto& role : roles()) {
    enter(role + ".connect");
    std::lock_guard lock(mutex_);
    auto& queue = error_queues_[role];
    found.push_back({role, "fake://" + role, Identity{"zout-test", "fake-" + role, "0", "1.0"}, queue});
    queue.clear();
  }
  return found;
}

std::vector<std::string> FakeBench::enter_safe_state() noexcept {
  std::vector<std::string> failures;
  try {
    enter("bench.enter_safe_state");
  } catch (const std::exception& e) {
    failures.push_back(fmt::format("bench: {}", e.what()));
    return failures;
  }
  const auto attempt = [this, &failures](const std::string& role, const auto& action) {
    for (int tries = 0;; ++tries) {
      try {
        action();
        return;
      } catch (const std::exception& e) {
        if (tries == 1) {
          failures.push_back(fmt::format("{}: {}", role, e.what()));
          return;
        }
        try {
          reconnect(role);
        } catch (const std::exception&) {
          // The retry reports the failure.
        }
      }
    }
  };
  attempt("load", [this] { set_input(false); });
  attempt("source", [this] { set_output(false); });
  if (with_switch_) attempt("switch", [this] { open_all(); });
  return failures;
}

void FakeBench::reconnect(const std::string& role) {
  const auto present = roles();
  if (std::find(present.begin(), present.end(), role) == present.end()) {
    throw std::invalid_argument("bench has no instrument in role " + role);
  }
  enter(role + ".reconnect");
}

std::vector<std::string> FakeBench::drain_all_errors() {
  enter("bench.drain_all_errors");
  std::vector<std::string> lines;
  std::lock_guard lock(mutex_);
  for (const auto& role : std::vector<std::string>{"source", "meter", "load", "switch"}) {
    for (const auto& entry : error_queues_[role]) lines.push_back(fmt::format("{}: {},\"{}\"", role, entry.code, entry.message));
    error_queues_[role].clear();
  }
  return lines;
}

std::vector<std::string> FakeBench::roles() const {
  std::vector<std::string> out{"source", "meter", "load"};
  if (with_switch_) out.push_back("switch");
  return out;
}

// --- Source.

void FakeBench::select_sine() { enter("source.select_sine"); }

void FakeBench::set_frequency_hz(double frequency_hz) {
  enter(fmt::format("source.set_frequency_hz {:g}", frequency_hz));
  std::lock_guard lock(mutex_);
  frequency_hz_ = frequency_hz;
}

void FakeBench::set_amplitude_volts_peak(double amplitude_volts_peak) {
  enter(fmt::format("source.set_amplitude_volts_peak {:g}", amplitude_volts_peak));
  std::lock_guard lock(mutex_);
  amplitude_volts_peak_ = amplitude_volts_peak;
}

void FakeBench::set_offset_volts(double offset_volts) {
  enter(fmt::format("source.set_offset_volts {:g}", offset_volts));
  std::lock_guard lock(mutex_);
  offset_volts_ = offset_volts;
}

void FakeBench::set_output(bool on) {
  enter(fmt::format("source.set_output {}", on_off(on)));
  std::lock_guard lock(mutex_);
  source_on_ = on;
}

double FakeBench::read_frequency_hz() {
  enter("source.read_frequency_hz");
  std::lock_guard lock(mutex_);
  return frequency_hz_;
}

double FakeBench::read_amplitude_volts_peak() {
  enter("source.read_amplitude_volts_peak");
  std::lock_guard lock(mutex_);
  return amplitude_volts_peak_;
}

double FakeBench::read_offset_volts() {
  enter("source.read_offset_volts");
  std::lock_guard lock(mutex_);
  return offset_volts_;
}

bool FakeBench::read_output() {
  enter("source.read_output");
  std::lock_guard lock(mutex_);
  return source_on_;
}

// --- Meter.

void FakeBench::configure_dc_volts(double range_volts, double nplc) {
  enter(fmt::format("meter.configure_dc_volts {:g} {:g}", range_volts, nplc));
  std::lock_guard lock(mutex_);
  meter_function_ = MeterFunction::dc_volts;
}

void FakeBench::configure_ac_volts(double range_volts) {
  enter(fmt::format("meter.configure_ac_volts {:g}", range_volts));
  std::lock_guard lock(mutex_);
  meter_function_ = MeterFunction::ac_volts;
}

ScpiNumber FakeBench::read_one() {
  const auto effect = enter("meter.read_one");
  std::lock_guard lock(mutex_);
  if (meter_function_ == MeterFunction::none) throw std::logic_error("fake meter read before it was configured");
  const double value = meter_function_ == MeterFunction::ac_volts ? unit_.ripple_rms_volts_per_amp * load_amps_locked()
                                                                  : dc_reading_locked();
  return reading(effect, value);
}

std::vector<ScpiNumber> FakeBench::read_many(int count) {
  const auto effect = enter(fmt::format("meter.read_many {}", count));
  std::lock_guard lock(mutex_);
  if (meter_function_ != MeterFunction::dc_volts) throw std::logic_error("fake meter: read_many needs DC volts");
  std::vector<ScpiNumber> out;
  for (int i = 0; i < count; ++i) out.push_back(reading(effect, dc_reading_locked()));
  return out;
}

// --- Load.

void FakeBench::select_mode(LoadMode mode) {
  enter(fmt::format("load.select_mode {}", mode == LoadMode::constant_current ? "cc" : "cr"));
  std::lock_guard lock(mutex_);
  load_mode_ = mode;
}

void FakeBench::set_current_amps(double current_amps) {
  enter(fmt::format("load.set_current_amps {:g}", current_amps));
  std::lock_guard lock(mutex_);
  set_amps_ = current_amps;
}

void FakeBench::set_resistance_ohms(double resistance_ohms) {
  enter(fmt::format("load.set_resistance_ohms {:g}", resistance_ohms));
  std::lock_guard lock(mutex_);
  set_ohms_ = resistance_ohms;
}

void FakeBench::set_input(bool on) {
  enter(fmt::format("load.set_input {}", on_off(on)));
  std::lock_guard lock(mutex_);
  load_on_ = on;
}

double FakeBench::measure_current_amps() {
  const auto effect = enter("load.measure_current_amps");
  std::lock_guard lock(mutex_);
  return load_value(reading(effect, load_amps_locked()), "current");
}

double FakeBench::measure_voltage_volts() {
  const auto effect = enter("load.measure_voltage_volts");
  std::lock_guard lock(mutex_);
  return load_value(reading(effect, output_volts_), "voltage");
}

// --- Switch.

void FakeBench::close_slot(int slot) {
  enter(fmt::format("switch.close_slot {}", slot));
  std::lock_guard lock(mutex_);
  closed_slot_ = slot;
}

void FakeBench::open_all() {
  enter("switch.open_all");
  std::lock_guard lock(mutex_);
  closed_slot_.reset();
}

bool FakeBench::is_closed(int slot) {
  enter(fmt::format("switch.is_closed {}", slot));
  std::lock_guard lock(mutex_);
  return closed_slot_ == slot;
}

nlohmann::json fast_plan_json(int sweeps, double interval_s) {
  nlohmann::json plan = {
      {"name", "fake-fast"},
      {"dut", {{"model", "fake unit"}, {"stages", 5}, {"capacitance_farads", 47e-9}}},
      {"source", {{"waveform", "sine"}, {"frequency_hz", 20000}, {"amplitude_volts_peak", 40}, {"offset_volts", 0}}},
      {"load", {{"mode", "current"}, {"steps_amps", {0, 1e-4, 2e-4, 4e-4}}, {"rated_amps", 4e-4}}},
      {"settle", {{"method", "window"}, {"tolerance_volts", 0.01}, {"max_s", 0.5}, {"window_readings", 2}}},
      {"measure",
       {{"dc", {{"nplc", 1}, {"samples", 2}, {"range_volts", 1000}}},
        {"ripple", {{"method", "ac_rms"}, {"range_volts", 10}, {"at", "rated_step"}}}}},
      {"impedance", {{"fit_max_amps", 4e-4}}},
      {"limits", {{"v_oc_min_volts", 370}, {"v_oc_max_volts", 390}, {"z_out_max_ohms", 250000}}},
      {"repeat", {{"count", sweeps}}}};
  if (sweeps > 1) {
    plan["repeat"]["interval_s"] = interval_s;
    plan["repeat"]["baseline_sweeps"] = 2;
  }
  return plan;
}

RecoveryPolicy fast_recovery_policy() {
  using std::chrono::milliseconds;
  RecoveryPolicy policy;
  policy.backoff = {milliseconds(1), milliseconds(1), milliseconds(1), milliseconds(1)};
  policy.connect_retry_pause = milliseconds(1);
  policy.unreachable_pause = milliseconds(1);
  return policy;
}

BenchConfig fake_bench_config(const std::string& database_path, bool with_switch) {
  BenchConfig bench;
  bench.file_path = "fake-bench.json";
  bench.station = "unit-test";
  bench.database_path = database_path;
  bench.control_socket_path = "";
  for (auto* instrument : {&bench.source, &bench.meter, &bench.load}) instrument->address = "fake://";
  if (with_switch) bench.panel_switch = InstrumentConfig{"fake://", "", std::chrono::milliseconds(2000)};
  bench.safety.max_output_volts = 500.0;
  bench.safety.max_load_amps = 0.01;
  bench.safety.max_source_volts_peak = 100.0;
  return bench;
}

}  // namespace zout::test
