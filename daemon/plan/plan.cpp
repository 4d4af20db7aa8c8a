#include "plan.h"

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <algorithm>
#include <cmath>

#include "daemon/analysis/rated_step.h"
#include "daemon/plan/json_reader.h"

namespace zout {
namespace {

DutSpec read_dut(JsonReader node) {
  DutSpec dut;
  if (auto model = node.optional_member("model")) dut.model = model->string();
  dut.stages = static_cast<int>(node.member("stages").integer(1, 50));
  dut.capacitance_farads = node.member("capacitance_farads").number(1e-15, 1.0);
  node.refuse_unknown_keys();
  return dut;
}

DriveSpec read_source(JsonReader node) {
  DriveSpec source;
  if (auto waveform = node.optional_member("waveform")) source.waveform = waveform->choice({"sine"});
  source.frequency_hz = node.member("frequency_hz").number(1e-3, 100e6);
  source.amplitude_volts_peak = node.member("amplitude_volts_peak").number(0.0, 1e4);
  if (auto offset = node.optional_member("offset_volts")) source.offset_volts = offset->number(-1e4, 1e4);
  node.refuse_unknown_keys();
  return source;
}

LoadPlan read_load(JsonReader node) {
  LoadPlan load;
  const std::string mode = node.member("mode").choice({"current", "resistance"});
  load.mode = mode == "current" ? LoadStepMode::current : LoadStepMode::resistance;
  const char* key = load.mode == LoadStepMode::current ? "steps_amps" : "steps_ohms";
  JsonReader steps = node.member(key);
  for (const JsonReader& step : steps.elements(1, 10'000)) {
    if (!step.json().is_number()) step.fail("must be a number");
    const double value = step.json().get<double>();
    if (load.mode == LoadStepMode::current && value < 0.0) {
      step.fail(fmt::format("{:g} is negative; steps must be >= 0", value));
    }
    if (load.mode == LoadStepMode::resistance && !(value > 0.0)) {
      step.fail(fmt::format("{:g} is not positive; resistances must be > 0", value));
    }
    load.steps.push_back(step.number(load.mode == LoadStepMode::current ? 0.0 : 1e-3, 1e12));
  }
  if (auto rated = node.optional_member("rated_amps")) load.rated_amps = rated->number(1e-12, 1e3);
  node.refuse_unknown_keys();
  return load;
}

SettleSpec read_settle(JsonReader node) {
  SettleSpec settle;
  const std::string method = node.member("method").choice({"fixed", "window", "predictive"});
  settle.method = method == "fixed" ? SettleMethod::fixed
                  : method == "window" ? SettleMethod::window
                                       : SettleMethod::predictive;
  settle.tolerance_volts = node.member("tolerance_volts").number(1e-9, 1e4);
  settle.max_s = node.member("max_s").number(1e-3, 86'400.0);
  if (settle.method == SettleMethod::fixed) {
    settle.dwell_s = node.member("dwell_s").number(0.0, settle.max_s);
  } else if (auto dwell = node.optional_member("dwell_s")) {
    dwell->fail("applies only to method \"fixed\"");
  }
  if (auto window = node.optional_member("window_readings")) {
    if (settle.method != SettleMethod::window) window->fail("applies only to method \"window\"");
    settle.window_readings = static_cast<int>(window->integer(2, 1000));
  }
  node.refuse_unknown_keys();
  return settle;
}

MeasureSpec read_measure(JsonReader node) {
  MeasureSpec measure;
  if (auto dc = node.optional_member("dc")) {
    if (auto nplc = dc->optional_member("nplc")) measure.dc_nplc = nplc->number(0.001, 1000.0);
    if (auto samples = dc->optional_member("samples")) measure.dc_samples = static_cast<int>(samples->integer(1, 1000));
    if (auto range = dc->optional_member("range_volts")) measure.dc_range_volts = range->number(1e-3, 1e6);
    dc->refuse_unknown_keys();
  }
  if (auto ripple = node.optional_member("ripple")) {
    if (auto method = ripple->optional_member("method")) {
      measure.ripple = method->choice({"ac_rms", "none"}) == "ac_rms" ? RippleMethod::ac_rms : RippleMethod::none;
    }
    if (auto range = ripple->optional_member("range_volts")) measure.ripple_range_volts = range->number(1e-3, 1e6);
    if (auto at = ripple->optional_member("at")) {
      measure.ripple_at =
          at->choice({"every_step", "rated_step"}) == "rated_step" ? RippleSteps::rated_step : RippleSteps::every_step;
    }
    ripple->refuse_unknown_keys();
  }
  node.refuse_unknown_keys();
  return measure;
}

analysis::Limits read_limits(JsonReader node) {
  analysis::Limits limits;
  const auto read = [&node](const char* key, std::optional<double>& out, double min, double max) {
    if (auto value = node.optional_member(key)) out = value->number(min, max);
  };
  read("v_oc_min_volts", limits.v_oc_min_volts, 0.0, 1e6);
  read("v_oc_max_volts", limits.v_oc_max_volts, 0.0, 1e6);
  read("z_out_max_ohms", limits.z_out_max_ohms, 0.0, 1e15);
  read("ripple_pp_max_volts", limits.ripple_pp_max_volts, 0.0, 1e6);
  read("effective_capacitance_min_farads", limits.effective_capacitance_min_farads, 0.0, 1.0);
  read("diode_drop_max_volts", limits.diode_drop_max_volts, 0.0, 1e3);
  read("v_oc_drift_max_volts_per_hour", limits.v_oc_drift_max_volts_per_hour, 0.0, 1e6);
  read("z_out_drift_max_ohms_per_hour", limits.z_out_drift_max_ohms_per_hour, 0.0, 1e15);
  read("ripple_drift_max_volts_per_hour", limits.ripple_drift_max_volts_per_hour, 0.0, 1e6);
  if (limits.v_oc_min_volts && limits.v_oc_max_volts && *limits.v_oc_min_volts > *limits.v_oc_max_volts) {
    node.member("v_oc_min_volts").fail(fmt::format("{:g} is above v_oc_max_volts {:g}", *limits.v_oc_min_volts,
                                                   *limits.v_oc_max_volts));
  }
  node.refuse_unknown_keys();
  return limits;
}

RepeatSpec read_repeat(JsonReader node) {
  RepeatSpec repeat;
  repeat.count = static_cast<int>(node.member("count").integer(1, 1'000'000));
  if (auto interval = node.optional_member("interval_s")) repeat.interval_s = interval->number(0.0, 7 * 86'400.0);
  if (auto baseline = node.optional_member("baseline_sweeps")) repeat.baseline_sweeps = static_cast<int>(baseline->integer(2, 10'000));
  if (auto sigma = node.optional_member("band_sigma")) repeat.band_sigma = sigma->number(0.1, 100.0);
  if (auto fail = node.optional_member("fail_on_drift_alarm")) repeat.fail_on_drift_alarm = fail->boolean();
  node.refuse_unknown_keys();
  return repeat;
}

}  // namespace

Plan parse_plan(const nlohmann::json& document, const std::string& origin) {
  JsonReader root(document, "plan", origin);
  Plan plan;
  plan.name = root.member("name").name();
  plan.dut = read_dut(root.member("dut"));
  plan.source = read_source(root.member("source"));
  plan.load = read_load(root.member("load"));
  plan.settle = read_settle(root.member("settle"));
  if (auto measure = root.optional_member("measure")) plan.measure = read_measure(*measure);
  JsonReader impedance = root.member("impedance");
  plan.impedance.fit_max_amps = impedance.member("fit_max_amps").number(1e-12, 1e3);
  if (auto operating = impedance.optional_member("operating_amps")) {
    plan.impedance.operating_amps = operating->number(1e-12, 1e3);
  }
  impedance.refuse_unknown_keys();
  if (auto limits = root.optional_member("limits")) plan.limits = read_limits(*limits);
  if (auto repeat = root.optional_member("repeat")) plan.repeat = read_repeat(*repeat);
  root.refuse_unknown_keys();

  if (plan.load.mode == LoadStepMode::current) {
    const bool has_zero = std::find(plan.load.steps.begin(), plan.load.steps.end(), 0.0) != plan.load.steps.end();
    const long non_zero = std::count_if(plan.load.steps.begin(), plan.load.steps.end(), [](double s) { return s > 0.0; });
    if (!has_zero || non_zero < 2) {
      root.member("load").member("steps_amps").fail(
          "needs a 0 A step (for V_oc) and at least two non-zero steps (for Z_out)");
    }
  }
  if (plan.is_soak() && plan.repeat.baseline_sweeps > plan.repeat.count) {
    root.member("repeat").member("baseline_sweeps").fail(fmt::format(
        "{} is more than repeat.count {}", plan.repeat.baseline_sweeps, plan.repeat.count));
  }
  if (plan.measure.ripple_at == RippleSteps::rated_step && !plan.rated_step_index()) {
    root.member("measure").member("ripple").member("at").fail(
        "\"rated_step\" needs load.mode \"current\" and a step within 5% of the rated load (load.rated_amps, "
        "default the largest step)");
  }
  plan.canonical_json = document.dump();  // nlohmann's object keys are sorted: a stable form
  return plan;
}

std::optional<std::size_t> Plan::rated_step_index() const {
  if (load.mode != LoadStepMode::current || load.steps.empty()) return std::nullopt;
  const double rated = load.rated_amps.value_or(*std::max_element(load.steps.begin(), load.steps.end()));
  return analysis::rated_step_index(load.steps, rated);
}

bool Plan::reads_ripple_at(std::size_t step_index) const {
  if (measure.ripple != RippleMethod::ac_rms) return false;
  if (measure.ripple_at == RippleSteps::every_step) return true;
  const auto rated = rated_step_index();
  return rated && load.steps[step_index] == load.steps[*rated];
}

Plan load_plan_file(const std::string& file_path) {
  return parse_plan(JsonReader::parse_file(file_path), file_path);
}

}  // namespace zout
