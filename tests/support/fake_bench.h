#pragma once
// A scripted bench in memory for the engine's unit tests: one object that is the Bench and
// its four roles (Source, Meter, Load, Switch). It records every command in order, models
// the unit's DC output as v = v_oc − R·I (approached by a fixed fraction per meter reading,
// so settling detectors finish in a few readings), and fails or bends chosen calls: a drop
// (IoError disconnected), a stall (IoError timeout, thrown at once), an overload reading
// (9.91E37), a reading of a given value, or an action run just before a call (ask for an
// abort, put an entry in an error queue). Safe to use from two threads (the load is read
// on its own thread while the meter reads).
//
// Commands are named "role.name" and recorded with their arguments, e.g.
// "load.set_input off", "load.set_current_amps 0.0001", "meter.read_many 2",
// "meter.configure_dc_volts 1000 1", "switch.close_slot 2", "meter.reconnect",
// "meter.connect" (one per role in connect()), "bench.drain_all_errors" and
// "bench.enter_safe_state" (recorded before the safe-state commands it sends). A command
// that fails is recorded with " [drop]" or " [stall]" appended and has no effect.

#include <functional>
#include <map>
#include <mutex>
#include <optional>
#include <string>
#include <variant>
#include <vector>

#include <nlohmann/json.hpp>

#include "daemon/engine/bench.h"
#include "daemon/engine/recovery_policy.h"
#include "daemon/plan/bench_config.h"
#include "drivers/scpi/error_entry.h"

namespace zout::test {

enum class FakeFault {
  drop,      // IoError(disconnected)
  stall,     // IoError(timeout)
  overload,  // a meter reading comes back as not-a-number (SCPI 9.91E37)
};

class FakeBench final : public Bench, public Source, public Meter, public Load, public Switch {
 public:
  // The unit under test as the meter and the load see it.
  struct Unit {
    double open_circuit_volts = 380.0;
    double source_ohms = 200e3;
    // Fraction of the gap to the settled value closed by each DC meter reading (1: at once).
    double approach = 1.0;
    // The AC (ripple) RMS reading per ampere of load current.
    double ripple_rms_volts_per_amp = 100.0;
  };

  explicit FakeBench(bool with_switch = false);
  FakeBench(bool with_switch, Unit unit);

  // --- Scripting. `command` is a name without arguments ("meter.read_many"); `call` counts
  // that command's calls from 1, over the whole life of the bench.

  // Calls `call` .. `call + times - 1` of `command` fail (drop, stall) or, for a meter
  // reading, return an overload.
  void inject(const std::string& command, FakeFault fault, int call = 1, int times = 1);
  // Those calls of a reading command return `value` instead of the model's value (for
  // "meter.read_many": every reading of the call).
  void inject_reading(const std::string& command, double value, int call = 1, int times = 1);
  // Runs `action` just before call `call` of `command` (on the thread making the call,
  // without the bench's lock held).
  void before(const std::string& command, int call, std::function<void()> action);
  // Puts an entry at the end of `role`'s error queue.
  void push_error(const std::string& role, ErrorEntry entry);
  // Changes the unit (e.g. a drift between soak sweeps).
  void set_unit(const Unit& unit);

  // --- Inspection.

  // Every command so far, in order, with its arguments (and a fault mark).
  std::vector<std::string> commands() const;
  // The commands after the latest "bench.enter_safe_state" (all of them when there was none).
  std::vector<std::string> last_safe_state_commands() const;
  // How many times `command` (a name without arguments) was called.
  int calls(const std::string& command) const;
  // Load input off, source output off and, with a switch, no slot closed.
  bool in_safe_state() const;
  bool source_output_on() const;
  bool load_input_on() const;
  std::optional<int> closed_slot() const;

  // --- Bench.
  Source& source() override { return *this; }
  Meter& meter() override { return *this; }
  Load& load() override { return *this; }
  Switch* panel_switch() override { return with_switch_ ? this : nullptr; }
  std::vector<ConnectedInstrument> connect() override;
  // Like BenchConnection: each command tried, on failure once more after a reconnect.
  std::vector<std::string> enter_safe_state() noexcept override;
  void reconnect(const std::string& role) override;
  std::vector<std::string> drain_all_errors() override;
  std::vector<std::string> roles() const override;

  // --- Source.
  void select_sine() override;
  void set_frequency_hz(double frequency_hz) override;
  void set_amplitude_volts_peak(double amplitude_volts_peak) override;
  void set_offset_volts(double offset_volts) override;
  void set_output(bool on) override;
  double read_frequency_hz() override;
  double read_amplitude_volts_peak() override;
  double read_offset_volts() override;
  bool read_output() override;

  // --- Meter.
  void configure_dc_volts(double range_volts, double nplc) override;
  void configure_ac_volts(double range_volts) override;
  ScpiNumber read_one() override;
  std::vector<ScpiNumber> read_many(int count) override;

  // --- Load.
  void select_mode(LoadMode mode) override;
  void set_current_amps(double current_amps) override;
  void set_resistance_ohms(double resistance_ohms) override;
  void set_input(bool on) override;
  double measure_current_amps() override;
  double measure_voltage_volts() override;

  // --- Switch.
  void close_slot(int slot) override;
  void open_all() override;
  bool is_closed(int slot) override;

 private:
  using Effect = std::variant<FakeFault, double>;
  struct Rule {
    std::string command;
    int first_call = 1;
    int last_call = 1;
    Effect effect;
  };
  enum class MeterFunction { none, dc_volts, ac_volts };

  // Counts and records the command `text` ("name args"), runs a before-action, throws an
  // injected drop or stall; returns an injected reading effect (overload or value).
  std::optional<Effect> enter(const std::string& text);
  // Under the lock: the model's load current and settled output now.
  double load_amps_locked() const;
  double settled_volts_locked() const;
  // Under the lock: one DC meter reading of the model (moving the output on).
  double dc_reading_locked();
  ScpiNumber reading(const std::optional<Effect>& effect, double model_value) const;

  mutable std::mutex mutex_;
  const bool with_switch_;
  Unit unit_;
  std::vector<std::string> commands_;
  std::map<std::string, int> calls_;
  std::vector<Rule> rules_;
  std::map<std::pair<std::string, int>, std::function<void()>> actions_;
  std::map<std::string, std::vector<ErrorEntry>> error_queues_;

  // The instruments' state.
  double frequency_hz_ = 0.0;
  double amplitude_volts_peak_ = 0.0;
  double offset_volts_ = 0.0;
  bool source_on_ = false;
  MeterFunction meter_function_ = MeterFunction::none;
  LoadMode load_mode_ = LoadMode::constant_current;
  double set_amps_ = 0.0;
  double set_ohms_ = 1e12;
  bool load_on_ = false;
  std::optional<int> closed_slot_;
  double output_volts_ = 0.0;  // where the unit's output has got to
};

// A plan sized for the fake unit and for milliseconds: current steps 0, 0.1, 0.2 and
// 0.4 mA (rated 0.4 mA, ripple read there only), a two-reading stable window, two DC
// samples, limits around the default Unit (V_oc 370..390 V, Z_out under 250 kΩ) and
// `sweeps` sweeps `interval_s` apart (a soak when more than one: baseline 2 sweeps).
nlohmann::json fast_plan_json(int sweeps = 1, double interval_s = 0.0);

// Backoffs, connect retries and the unreachable pause all 1 ms; budgets as by default.
RecoveryPolicy fast_recovery_policy();

// A bench file for the fake: station "unit-test", the database at `database_path`, a
// switch when asked, and safety maxima 500 V out, 10 mA load, 100 V peak drive.
BenchConfig fake_bench_config(const std::string& database_path = "", bool with_switch = false);

}  // namespace zout::test
