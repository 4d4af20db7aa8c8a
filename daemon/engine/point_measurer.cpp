#include "point_measurer.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <future>
#include <numeric>

#include "daemon/analysis/ripple.h"
#include "daemon/analysis/settling.h"
#include "daemon/engine/engine_errors.h"

namespace zout {
namespace {

analysis::SettleSettings settle_settings(const SettleSpec& spec) {
  analysis::SettleSettings settings;
  switch (spec.method) {
    case SettleMethod::fixed: settings.method = analysis::SettleSettings::Method::fixed; break;
    case SettleMethod::window: settings.method = analysis::SettleSettings::Method::window; break;
    case SettleMethod::predictive: settings.method = analysis::SettleSettings::Method::predictive; break;
  }
  settings.tolerance_volts = spec.tolerance_volts;
  settings.max_s = spec.max_s;
  if (spec.method == SettleMethod::fixed) settings.dwell_s = spec.dwell_s;
  settings.window_readings = static_cast<std::size_t>(spec.window_readings);
  return settings;
}

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

}  // namespace

PointMeasurer::PointMeasurer(Bench& bench, const Plan& plan, const SafetyLimits& safety,
                             std::function<bool()> abort_requested)
    : bench_(bench), plan_(plan), safety_(safety), abort_requested_(std::move(abort_requested)) {}

void PointMeasurer::configure_meter() {
  bench_.meter().configure_dc_volts(plan_.measure.dc_range_volts, plan_.measure.dc_nplc);
  meter_on_dc_ = true;
}

void PointMeasurer::check_abort() const {
  if (abort_requested_()) throw RunAborted("abort requested");
}

double PointMeasurer::checked_dc(const ScpiNumber& reading, const char* what) const {
  if (!reading.is_number()) {
    // Over range: the output may be above anything the range holds, safety limit included.
    throw SafetyTrip(fmt::format("meter: {} reading is overload/invalid (over the {:g} V range); treating it as "
                                 "possibly above safety.max_output_volts {:g} V",
                                 what, plan_.measure.dc_range_volts, safety_.max_output_volts));
  }
  if (std::abs(reading.value) > safety_.max_output_volts) {
    throw SafetyTrip(fmt::format("meter: {} reading {:g} V is above safety.max_output_volts {:g} V", what,
                                 reading.value, safety_.max_output_volts));
  }
  return reading.value;
}

MeasuredPoint PointMeasurer::measure(int step_index, std::chrono::steady_clock::time_point step_started,
                                     WallTime step_started_at) {
  MeasuredPoint point;
  point.step_index = step_index;
  point.step_started_at = step_started_at;
  if (!meter_on_dc_) configure_meter();

  // Settle: read until the plan's detector decides.
  auto detector = analysis::make_settling_detector(settle_settings(plan_.settle));
  for (;;) {
    check_abort();
    const ScpiNumber reading = bench_.meter().read_one();
    const double t = seconds_since(step_started);
    const double volts = checked_dc(reading, "settling");
    point.readings.push_back({"meter", "settle_dc_volts", volts, std::chrono::system_clock::now()});
    const auto decision = detector->add_reading(std::max(t, 1e-9), volts);
    if (decision.status == analysis::SettleStatus::keep_going) continue;
    point.settled = decision.status == analysis::SettleStatus::settled;
    point.settle_s = t;
    break;
  }

  // The load's own view of the settled step, read while the DMM integrates its samples: the
  // two instruments sit on separate links, and the readings are then simultaneous as well.
  struct LoadView {
    double amps = 0.0;
    WallTime amps_at;
    double volts = 0.0;
    WallTime volts_at;
  };
  check_abort();
  auto load_view = std::async(std::launch::async, [this] {
    LoadView view;
    view.amps = bench_.load().measure_current_amps();
    view.amps_at = std::chrono::system_clock::now();
    view.volts = bench_.load().measure_voltage_volts();
    view.volts_at = std::chrono::system_clock::now();
    return view;
  });
  // Whatever happens to the meter, the load's link is idle again before this returns.
  struct JoinOnExit {
    std::future<LoadView>& future;
    ~JoinOnExit() {
      if (future.valid()) future.wait();
    }
  } join_on_exit{load_view};

  // The point's DC value: the plan's samples, back to back.
  const auto samples = bench_.meter().read_many(plan_.measure.dc_samples);
  std::vector<double> volts;
  for (const auto& sample : samples) {
    volts.push_back(checked_dc(sample, "dc"));
    point.readings.push_back({"meter", "dc_volts", volts.back(), std::chrono::system_clock::now()});
  }
  const double n = static_cast<double>(volts.size());
  point.dc_volts = std::accumulate(volts.begin(), volts.end(), 0.0) / n;
  if (volts.size() > 1) {
    double sum_sq = 0.0;
    for (double v : volts) sum_sq += (v - point.dc_volts) * (v - point.dc_volts);
    point.dc_sigma_volts = std::sqrt(sum_sq / (n - 1.0)) / std::sqrt(n);
  }

  // Ripple: true RMS on AC volts, at the steps the plan asks for; the next step's settling
  // switches the meter back to DC while the output is still moving, so the switch costs no
  // extra waiting.
  if (plan_.reads_ripple_at(static_cast<std::size_t>(step_index))) {
    check_abort();
    bench_.meter().configure_ac_volts(plan_.measure.ripple_range_volts);
    meter_on_dc_ = false;
    const ScpiNumber ac = bench_.meter().read_one();
    if (ac.is_number()) {
      point.ripple_rms_volts = ac.value;
      point.ripple_pp_volts = analysis::sawtooth_pp_from_rms_volts(ac.value);
      point.readings.push_back({"meter", "ac_rms_volts", ac.value, std::chrono::system_clock::now()});
    }
    // An AC overload only means the ripple range was too small: the point keeps no ripple.
  }

  const LoadView view = load_view.get();
  point.load_amps = view.amps;
  point.readings.push_back({"load", "load_amps", view.amps, view.amps_at});
  point.load_volts = view.volts;
  point.readings.push_back({"load", "load_volts", view.volts, view.volts_at});
  if (std::abs(point.load_volts) > safety_.max_output_volts) {
    throw SafetyTrip(fmt::format("load: voltage reading {:g} V is above safety.max_output_volts {:g} V",
                                 point.load_volts, safety_.max_output_volts));
  }
  // The load was read during the DC samples: keep the readings in the order they were taken.
  std::stable_sort(point.readings.begin(), point.readings.end(),
                   [](const RawReading& a, const RawReading& b) { return a.taken_at < b.taken_at; });
  point.taken_at = std::chrono::system_clock::now();
  return point;
}

}  // namespace zout
