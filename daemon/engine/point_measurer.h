#pragma once
// Takes one settled point: after the engine has set the load for a step, reads the DMM
// until the plan's settling detector is satisfied (or max_s passes), then takes the DC
// samples with the load's own current and voltage read meanwhile (on the load's link), and the
// ripple (AC RMS) at the steps the plan asks for. Every raw value is kept for the store. Every
// DC reading is checked against the bench's safety maximum. The DMM stays on DC volts between
// points unless a ripple reading took it to AC.

#include <chrono>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "daemon/engine/bench.h"
#include "drivers/scpi/response.h"
#include "daemon/plan/bench_config.h"
#include "daemon/plan/plan.h"

namespace zout {

using WallTime = std::chrono::system_clock::time_point;

struct RawReading {
  std::string role;  // the instrument: meter | load
  std::string kind;  // "settle_dc_volts", "dc_volts", "ac_rms_volts", "load_amps", "load_volts"
  double value = 0.0;
  WallTime taken_at;
};

struct MeasuredPoint {
  int step_index = 0;
  double dc_volts = 0.0;        // mean of the DC samples
  double dc_sigma_volts = 0.0;  // standard error of that mean (0 with one sample)
  std::optional<double> ripple_rms_volts;
  std::optional<double> ripple_pp_volts;  // sawtooth estimate 2√3·RMS
  double load_amps = 0.0;       // the load's own measurement
  double load_volts = 0.0;
  double settle_s = 0.0;        // from the load step to the settling decision
  bool settled = true;          // false: max_s passed first
  WallTime step_started_at;
  WallTime taken_at;
  std::vector<RawReading> readings;
};

class PointMeasurer {
 public:
  // `abort_requested` is polled between readings; when it returns true, measure() throws
  // RunAborted. All references must outlive the measurer.
  PointMeasurer(Bench& bench, const Plan& plan, const SafetyLimits& safety,
                std::function<bool()> abort_requested);

  // Puts the DMM on DC volts with the plan's range and NPLC (again after a reconnect).
  void configure_meter();

  // Measures the step whose load was set at `step_started` (steady clock) / `step_started_at`.
  // Throws SafetyTrip, RunAborted, IoError (the caller reconnects and repeats the step).
  MeasuredPoint measure(int step_index, std::chrono::steady_clock::time_point step_started,
                        WallTime step_started_at);

 private:
  double checked_dc(const ScpiNumber& reading, const char* what) const;
  void check_abort() const;

  Bench& bench_;
  const Plan& plan_;
  const SafetyLimits& safety_;
  std::function<bool()> abort_requested_;
  bool meter_on_dc_ = false;
};

}  // namespace zout
