#pragma once
// Test data for `zout report` / `zout export`: a database written with StoreWriter holding one
// production run and one soak run of a 5-stage cascade, with invented readings and figures.
// Header-only, shared by the unit and integration tiers. Every value the tests check is a
// constant here, so a test can compare what the report shows with what was written.

#include <unistd.h>

#include <chrono>
#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "daemon/store/store_writer.h"

namespace zout::test {

// 2026-12-01T21:15:14.123Z plus `s` seconds.
inline store::TimePoint report_time(double s) {
  using namespace std::chrono;
  return sys_days{year{2026} / 12 / 1} + hours(21) + minutes(15) + seconds(14) + milliseconds(123) +
         milliseconds(static_cast<long long>(s * 1000.0 + 0.5));
}

// The cascade every plan here describes.
constexpr int report_stages = 5;
constexpr double report_capacitance_farads = 47e-9;
constexpr double report_frequency_hz = 20000.0;
constexpr double report_amplitude_volts_peak = 40.0;
constexpr double report_rated_amps = 1e-3;

inline std::string report_plan_json(int repeat_count, int baseline_sweeps) {
  return R"({"name":"cw5-report","dut":{"model":"CW5","stages":5,"capacitance_farads":47e-9},)"
         R"("source":{"waveform":"sine","frequency_hz":20000,"amplitude_volts_peak":40,"offset_volts":0},)"
         R"("load":{"mode":"current","steps_amps":[0,1e-5,5e-5,1e-4,5e-4,1e-3],"rated_amps":1e-3},)"
         R"("settle":{"method":"window","tolerance_volts":0.05,"max_s":15},)"
         R"("measure":{"dc":{"nplc":1,"samples":3,"range_volts":1000},"ripple":{"method":"ac_rms","range_volts":100}},)"
         R"("impedance":{"fit_max_amps":1e-4,"operating_amps":1e-5},)"
         R"("limits":{"v_oc_min_volts":383,"z_out_max_ohms":115000},)"
         R"("repeat":{"count":)" +
         std::to_string(repeat_count) + R"(,"interval_s":1800,"baseline_sweeps":)" + std::to_string(baseline_sweeps) +
         R"(,"band_sigma":3}})";
}

// One production point as written: set and measured current, DC output, ripple.
struct ReportPoint {
  double set_amps;
  double measured_amps;
  double dc_volts;
  double ripple_pp_volts;
  double settle_s;
};

// The production run's points (step order). The DC column is the mean of its three readings.
inline const std::vector<ReportPoint>& production_points() {
  static const std::vector<ReportPoint> points = {
      {0.0, 2.0e-9, 392.4, 0.0021, 0.8},       {1e-5, 1.0013e-5, 391.2, 0.171, 1.25},
      {5e-5, 5.0042e-5, 386.55, 0.83, 1.5},    {1e-4, 1.00071e-4, 380.375, 1.66, 2.0},
      {5e-4, 5.0019e-4, 339.125, 8.3, 3.5},    {1e-3, 1.00033e-3, 286.5, 16.6, 4.75},
  };
  return points;
}

struct ReportDatabase {
  std::filesystem::path file;
  std::int64_t production_run = 0;
  std::int64_t soak_run = 0;
  int soak_sweeps = 8;
};

// The soak run's figures for sweep k (V_oc falls 0.5 V/h, Z_out rises 200 Ω/h, plus a wiggle).
inline double soak_v_oc(int k) { return 392.0 - 0.25 * k + (k % 2 ? 0.05 : -0.05); }
inline double soak_z_out(int k) { return 118000.0 + 100.0 * k + (k % 3 ? 40.0 : -40.0); }
inline double soak_ripple(int k) { return 16.5 + 0.01 * k + (k % 2 ? 0.02 : -0.02); }

inline ReportDatabase make_report_database(const std::filesystem::path& directory) {
  using namespace store;
  ReportDatabase out;
  out.file = directory / "zout.db";
  StoreWriter writer(out.file);
  const auto station = writer.record_station("line-2", report_time(0));
  const auto meter = writer.record_instrument({station, "meter", "tcp://127.0.0.1:5602", "Bench", "DM-9", "M1", "1.0"}, report_time(0));
  const auto load = writer.record_instrument({station, "load", "tcp://127.0.0.1:5603", "Bench", "EL-2", "L1", "1.0"}, report_time(0));

  // Production run: one sweep, six points, five readings each.
  const auto plan = writer.record_plan("cw5-production", report_plan_json(1, 5), report_time(0));
  const auto unit = writer.record_unit("CW5-0042", "CW5", report_time(0));
  out.production_run = writer.create_run({unit, plan, station, RunKind::production, RunState::running, report_time(0),
                                          "ana", "first article", 3});
  const auto sweep = writer.start_sweep(out.production_run, 0, report_time(1));
  double t = 2;
  int step = 0;
  for (const auto& p : production_points()) {
    PointRecord point;
    point.sweep_id = sweep;
    point.step_index = step++;
    point.set_load_amps = p.set_amps;
    point.measured_load_amps = p.measured_amps;
    point.dc_volts = p.dc_volts;
    point.ripple_rms_volts = p.ripple_pp_volts / 3.4641016151377544;  // 2√3 for a sawtooth
    point.ripple_pp_volts = p.ripple_pp_volts;
    point.settle_s = p.settle_s;
    point.settled = step != 5;  // step 4 ran out of time
    point.step_started_at = report_time(t);
    point.taken_at = report_time(t + p.settle_s + 0.5);
    const double spread = 0.125;  // readings around the mean, exact in binary
    writer.commit_point(point, {{meter, "dc_volts", p.dc_volts - spread, report_time(t + p.settle_s)},
                                {meter, "dc_volts", p.dc_volts, report_time(t + p.settle_s + 0.1)},
                                {meter, "dc_volts", p.dc_volts + spread, report_time(t + p.settle_s + 0.2)},
                                {meter, "ac_rms_volts", *point.ripple_rms_volts, report_time(t + p.settle_s + 0.3)},
                                {load, "load_amps", p.measured_amps, report_time(t + p.settle_s + 0.4)}});
    t += 10;
  }
  writer.end_sweep(sweep, report_time(t));
  SweepResultRecord result;
  result.sweep_id = sweep;
  result.computed_at = report_time(t + 0.5);
  result.fit_points = 4;
  result.v_oc_volts = 392.4;
  result.z_out_ohms = 119250.0;
  result.z_out_stderr_ohms = 1530.0;
  result.z_chord_ohms = 105800.0;
  result.cascade_r_ohms = 104200.0;
  result.cascade_r_stderr_ohms = 870.0;
  result.effective_capacitance_farads = 45.59e-9;
  result.diode_drop_volts = 0.76;
  result.diode_m = 1.9;
  result.diode_i0_amps = 3.2e-6;
  result.rated_load_amps = report_rated_amps;
  result.ripple_rated_rms_volts = 16.6 / 3.4641016151377544;
  result.ripple_rated_pp_volts = 16.6;
  result.verdict = Verdict::fail;
  result.verdict_reasons = {"z_out_ohms 119250 is above z_out_max_ohms 115000"};
  writer.record_sweep_result(result);
  writer.record_event({report_time(12), EventLevel::warning, "meter", "reconnect", "tcp://127.0.0.1:5602: reconnected after a timeout", out.production_run, station});
  writer.record_event({report_time(13), EventLevel::info, "engine", "step", "step 1 settled", out.production_run, station});
  writer.record_event({report_time(40), EventLevel::error, "load", "scpi.error", "-222,\"Data out of range\"", out.production_run, station});
  writer.set_run_state(out.production_run, RunState::failed, report_time(t + 1));

  // Soak run: eight sweeps half an hour apart, two points each, a result each.
  const auto soak_plan = writer.record_plan("cw5-soak", report_plan_json(out.soak_sweeps, 3), report_time(0));
  const auto soak_unit = writer.record_unit("CW5-0043", "CW5", report_time(0));
  const double t0 = 100;
  out.soak_run = writer.create_run({soak_unit, soak_plan, station, RunKind::soak, RunState::running, report_time(t0), "ben", ""});
  for (int k = 0; k < out.soak_sweeps; ++k) {
    const double start = t0 + 1800.0 * k;
    const auto w = writer.start_sweep(out.soak_run, k, report_time(start));
    for (int s = 0; s < 2; ++s) {
      PointRecord point;
      point.sweep_id = w;
      point.step_index = s;
      point.set_load_amps = s == 0 ? 0.0 : report_rated_amps;
      point.measured_load_amps = s == 0 ? 0.0 : report_rated_amps;
      point.dc_volts = s == 0 ? soak_v_oc(k) : soak_v_oc(k) - 106.0;
      point.ripple_pp_volts = s == 0 ? 0.0 : soak_ripple(k);
      point.settle_s = 1.0;
      point.step_started_at = report_time(start + 1 + 5 * s);
      point.taken_at = report_time(start + 3 + 5 * s);
      writer.commit_point(point, {{meter, "dc_volts", point.dc_volts, report_time(start + 2 + 5 * s)}});
    }
    writer.end_sweep(w, report_time(start + 20));
    SweepResultRecord r;
    r.sweep_id = w;
    r.computed_at = report_time(start + 21);
    r.fit_points = 2;
    r.v_oc_volts = soak_v_oc(k);
    r.z_out_ohms = soak_z_out(k);
    r.rated_load_amps = report_rated_amps;
    r.ripple_rated_pp_volts = soak_ripple(k);
    if (k >= 2) {
      r.v_oc_drift_volts_per_hour = -0.5;
      r.v_oc_drift_stderr_volts_per_hour = 0.04;
      r.z_out_drift_ohms_per_hour = 200.0;
      r.z_out_drift_stderr_ohms_per_hour = 15.0;
      r.ripple_drift_volts_per_hour = 0.02;
      r.ripple_drift_stderr_volts_per_hour = 0.01;
    }
    r.verdict = Verdict::pass;
    writer.record_sweep_result(r);
  }
  writer.set_run_state(out.soak_run, RunState::passed, report_time(t0 + 1800.0 * out.soak_sweeps));
  return out;
}

}  // namespace zout::test
