// `zout check PLAN`: is the plan valid and safe on this bench, and what should each step read?
// Prints the Cockcroft–Walton predictions per step (ideal diodes: the real unit reads lower by
// its diode drops) and the high-voltage cautions. Touches no instrument.
#include <fmt/format.h>

#include <cmath>
#include <iostream>

#include <nlohmann/json.hpp>

#include "daemon/analysis/cascade_model.h"
#include "daemon/cli/client_paths.h"
#include "daemon/cli/command_errors.h"
#include "daemon/cli/exit_codes.h"
#include "daemon/cli/history_verbs.h"
#include "daemon/text/si_text.h"
#include "daemon/text/time_text.h"
#include "daemon/cli/text_table.h"
#include "daemon/plan/bench_config.h"
#include "daemon/plan/plan.h"
#include "daemon/plan/safety_check.h"

namespace zout::cli {
namespace {

using nlohmann::json;

struct CheckOptions {
  ClientPaths paths;
  std::string plan;
  bool json_output = false;
};

struct StepPrediction {
  double set_value = 0.0;  // A (current mode) or Ω (resistance mode)
  double load_amps = 0.0;
  double output_volts = 0.0;
  double ripple_pp_volts = 0.0;
};

// Kuffel, Zaengl & Kuffel §2.2 (daemon/analysis/cascade_model.h): the cascade is a source
// 2n·V_pk behind R = sag_factor/(fC). A resistive load R_L then draws V/R_L with
// V = 2n·V_pk·R_L/(R_L + R).
std::vector<StepPrediction> predict(const Plan& plan) {
  const int n = plan.dut.stages;
  const double f = plan.source.frequency_hz;
  const double c = plan.dut.capacitance_farads;
  const double ideal = analysis::ideal_open_circuit_volts(n, plan.source.amplitude_volts_peak);
  const double source_ohms = analysis::model_source_ohms(n, f, c);
  std::vector<StepPrediction> out;
  for (double step : plan.load.steps) {
    StepPrediction p;
    p.set_value = step;
    p.load_amps = plan.load.mode == LoadStepMode::current ? step : ideal / (step + source_ohms);
    p.output_volts = std::max(0.0, ideal - analysis::predicted_sag_volts(n, p.load_amps, f, c));
    p.ripple_pp_volts = analysis::predicted_ripple_pp_volts(n, p.load_amps, f, c);
    out.push_back(p);
  }
  return out;
}

const char* const cautions[] = {
    "High voltage: the unit's output is lethal-capable and its capacitors hold charge after the drive stops.",
    "Work behind an interlocked enclosure; discharge every stage with a rated discharge stick before touching.",
    "The software's safety maxima do not replace interlocks, fusing, or your site's electrical-safety rules;",
    "follow local codes and licensed practice for high-voltage test work.",
};

int run_check(const CheckOptions& o) {
  const Plan plan = load_plan_file(o.plan);  // invalid → ConfigError → exit_refused
  const std::string bench_path = o.paths.bench_file();
  const BenchConfig bench = load_bench_file(bench_path);
  const auto violations = safety_violations(plan, bench.safety);
  const auto steps = predict(plan);
  const double ideal = analysis::ideal_open_circuit_volts(plan.dut.stages,
                                                          plan.source.amplitude_volts_peak + std::abs(plan.source.offset_volts));
  const double steps_count = static_cast<double>(plan.load.steps.size());
  const double worst_case_s = plan.repeat.count * steps_count * plan.settle.max_s +
                              (plan.repeat.count - 1) * plan.repeat.interval_s;

  if (o.json_output) {
    json predictions = json::array();
    for (const auto& p : steps) {
      predictions.push_back({{plan.load.mode == LoadStepMode::current ? "set_amps" : "set_ohms", p.set_value},
                             {"load_amps", p.load_amps},
                             {"output_volts", p.output_volts},
                             {"ripple_pp_volts", p.ripple_pp_volts}});
    }
    std::cout << json{{"plan", o.plan},
                      {"bench", bench_path},
                      {"valid", true},
                      {"safe", violations.empty()},
                      {"violations", violations},
                      {"ideal_open_circuit_volts", ideal},
                      {"model_source_ohms", analysis::model_source_ohms(plan.dut.stages, plan.source.frequency_hz,
                                                                        plan.dut.capacitance_farads)},
                      {"predictions", predictions},
                      {"worst_case_duration_s", worst_case_s},
                      {"cautions", cautions}}
                     .dump(2)
              << "\n";
  } else {
    std::cout << fmt::format("plan {} ({}): valid\n", plan.name, o.plan);
    std::cout << fmt::format("bench {} (station {})\n", bench_path, bench.station);
    std::cout << fmt::format("unit: {} stages of {}, driven {} peak at {}\n", plan.dut.stages,
                             text::si_text(plan.dut.capacitance_farads, "F", 3), text::si_text(plan.source.amplitude_volts_peak, "V", 3),
                             text::si_text(plan.source.frequency_hz, "Hz", 3));
    std::cout << fmt::format("Cockcroft–Walton model: ideal no-load output 2n·V_pk = {}, source resistance {}\n",
                             text::si_text(ideal, "V", 4),
                             text::si_text(analysis::model_source_ohms(plan.dut.stages, plan.source.frequency_hz,
                                                            plan.dut.capacitance_farads),
                                "Ω", 4));
    TextTable table({"STEP", plan.load.mode == LoadStepMode::current ? "SET A" : "SET Ω", "LOAD", "PREDICTED V",
                     "PREDICTED RIPPLE PP"});
    for (std::size_t i = 0; i < steps.size(); ++i) {
      const auto& p = steps[i];
      table.add_row({std::to_string(i + 1),
                     plan.load.mode == LoadStepMode::current ? text::si_text(p.set_value, "A", 3) : text::si_text(p.set_value, "Ω", 3),
                     text::si_text(p.load_amps, "A", 3), text::si_text(p.output_volts, "V", 5), text::si_text(p.ripple_pp_volts, "V", 3)});
    }
    std::cout << table.render();
    std::cout << "(ideal diodes: a real unit reads lower by its diode drops, and its ripple meter sees the RMS)\n";
    std::cout << fmt::format("time: at most {} ({} sweep(s) × {} steps × max_s {} s)\n", text::clock_time(worst_case_s),
                             plan.repeat.count, plan.load.steps.size(), plan.settle.max_s);
    if (violations.empty()) {
      std::cout << fmt::format("safety: within the bench's maxima (output can reach {} of {} allowed)\n", text::si_text(ideal, "V", 4),
                               text::si_text(bench.safety.max_output_volts, "V", 4));
    } else {
      std::cout << "safety: REFUSED on this bench:\n";
      for (const auto& v : violations) std::cout << "  - " << v << "\n";
    }
    std::cout << "cautions:\n";
    for (const char* line : cautions) std::cout << "  " << line << "\n";
  }
  if (!violations.empty()) {
    std::cerr << fmt::format("zout check: {} is over the safety maxima of {}\n", o.plan, bench_path);
    return exit_refused;
  }
  return exit_ok;
}

}  // namespace

void add_check_command(CLI::App& app, int& exit_code) {
  auto o = std::make_shared<CheckOptions>();
  auto* verb = app.add_subcommand("check", "Validate a plan against a bench; print the model's predictions per step");
  verb->add_option("plan", o->plan, "Plan file (JSON)")->required()->check(CLI::ExistingFile);
  verb->add_flag("--json", o->json_output, "Print one JSON object");
  o->paths.add_options(*verb, false, false);
  verb->footer("Touches no instrument.\nExit status: 0 valid and safe, 7 invalid or over the bench's safety maxima.\n"
               "Example: zout check config/plans/bias-board-production.json");
  verb->callback(verb_callback("check", exit_code, [o] { return run_check(*o); }));
}

}  // namespace zout::cli
