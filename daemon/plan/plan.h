#pragma once
// A plan (DEVELOPERS.md, "Files a user writes"): what to do to one unit. Loaded from JSON and checked in full; a
// plan that loads has every value finite and within physical sense. Whether it fits a
// given bench's safety maxima is a separate check (safety_check.h).

#include <nlohmann/json_fwd.hpp>

#include <optional>
#include <string>
#include <vector>

#include "daemon/analysis/verdict.h"

namespace zout {

struct DutSpec {
  std::string model;                // free text, e.g. "BB5 bias board"
  int stages = 0;                   // n of the Cockcroft–Walton cascade
  double capacitance_farads = 0.0;  // nominal capacitance of each stage capacitor
};

struct DriveSpec {
  std::string waveform = "sine";    // only sine is supported
  double frequency_hz = 0.0;
  double amplitude_volts_peak = 0.0;
  double offset_volts = 0.0;
};

enum class LoadStepMode { current, resistance };

struct LoadPlan {
  LoadStepMode mode = LoadStepMode::current;
  std::vector<double> steps;        // amps (current mode) or ohms (resistance mode), in order
  std::optional<double> rated_amps; // the unit's rated load; default: the largest current step
  double min_operating_volts = 0.0; // not used by zout itself; documented for the load's limits
};

enum class SettleMethod { fixed, window, predictive };

struct SettleSpec {
  SettleMethod method = SettleMethod::window;
  double tolerance_volts = 0.0;     // band the output must stay within
  double max_s = 0.0;               // give up on a step after this long (the point is then marked)
  double dwell_s = 0.0;             // fixed: how long to wait
  int window_readings = 5;          // window: consecutive readings within tolerance
};

enum class RippleMethod { ac_rms, none };
// Where the ripple is read: every step (the ripple-against-load curve), or only at the rated
// step (what the ripple limit and soak drift use; spares the DMM two function switches a step).
enum class RippleSteps { every_step, rated_step };

struct MeasureSpec {
  double dc_nplc = 1.0;             // integration time in power-line cycles
  int dc_samples = 3;               // DC readings averaged per point
  double dc_range_volts = 1000.0;
  RippleMethod ripple = RippleMethod::ac_rms;
  double ripple_range_volts = 10.0;
  RippleSteps ripple_at = RippleSteps::every_step;
};

struct ImpedanceSpec {
  double fit_max_amps = 0.0;              // points up to this current enter the local fit
  std::optional<double> operating_amps;   // default: the smallest non-zero current step
};

struct RepeatSpec {
  int count = 1;                    // sweeps; more than one makes a soak run
  double interval_s = 0.0;          // from the start of one sweep to the start of the next
  int baseline_sweeps = 5;          // sweeps that set the control band (mean ± band_sigma·σ)
  double band_sigma = 3.0;
  bool fail_on_drift_alarm = false; // a drift alarm ends the run failed
};

struct Plan {
  std::string name;
  DutSpec dut;
  DriveSpec source;
  LoadPlan load;
  SettleSpec settle;
  MeasureSpec measure;
  ImpedanceSpec impedance;
  analysis::Limits limits;         // plan.limits: every one optional, an absent one not checked
  RepeatSpec repeat;
  std::string canonical_json;       // the plan as stored (compact, keys sorted)

  bool is_soak() const { return repeat.count > 1; }
  // The step of the rated load, as the analysis takes it: in current mode, the step nearest
  // load.rated_amps (default the largest step) when within 5% of it; nothing otherwise.
  std::optional<std::size_t> rated_step_index() const;
  // Whether the point of load step `step_index` takes a ripple reading.
  bool reads_ripple_at(std::size_t step_index) const;
};

// Loads and checks a plan file; throws ConfigError naming the file, JSON path and rule.
Plan load_plan_file(const std::string& file_path);
// The same for a plan given inline (over the control socket); `origin` names it in errors.
Plan parse_plan(const nlohmann::json& document, const std::string& origin);

}  // namespace zout
