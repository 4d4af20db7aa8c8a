#include "plot_writer.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <optional>
#include <span>

#include "daemon/analysis/cascade_model.h"
#include "daemon/analysis/drift.h"
#include "daemon/report/gnuplot_runner.h"
#include "daemon/report/model_comparison.h"

namespace zout::report {
namespace {

struct XY {
  double x = 0.0;
  double y = 0.0;
};

// A gnuplot single-quoted string: only ' needs escaping, as ''.
std::string quoted(const std::string& text) {
  std::string out = "'";
  for (char c : text) out += c == '\'' ? std::string("''") : std::string(1, c);
  return out + "'";
}

// A text gnuplot shows as given: '_' and '^' in a serial or unit stay literal. (Per string
// rather than `set termoption noenhanced`, which would drop the plot titles from the SVG's
// <title> elements.)
std::string text(const std::string& words) { return quoted(words) + " noenhanced"; }

// A named data block, values written so they read back exactly.
std::string data_block(const std::string& name, const std::vector<XY>& rows) {
  std::string out = "$" + name + " << EOD\n";
  for (const auto& r : rows) out += fmt::format("{:.17g} {:.17g}\n", r.x, r.y);
  return out + "EOD\n";
}

// `samples` evenly spaced points of f over [from, to].
template <typename F>
std::vector<XY> sampled(double from, double to, int samples, F f) {
  std::vector<XY> rows;
  for (int i = 0; i < samples; ++i) {
    const double x = from + (to - from) * i / (samples - 1);
    rows.push_back({x, f(x)});
  }
  return rows;
}

std::string title_of(const RunRecord& record, const std::string& what) {
  return fmt::format("{}, run {}: {}", record.header.serial, record.header.run_id, what);
}

double largest_load_amps(const RunRecord& record) {
  double largest = 0.0;
  for (const auto& p : record.points) {
    if (p.load_amps) largest = std::max(largest, *p.load_amps);
  }
  return largest;
}

// Where Z_out was taken: the plan's impedance.operating_amps, else the smallest non-zero
// current step (zoutd's rule, sweep_analysis.h), else the smallest non-zero current measured.
std::optional<double> operating_amps(const RunRecord& record) {
  if (record.plan && record.plan->impedance.operating_amps) return record.plan->impedance.operating_amps;
  std::optional<double> smallest;
  const auto consider = [&](double amps) {
    if (amps > 0.0 && (!smallest || amps < *smallest)) smallest = amps;
  };
  if (record.plan && record.plan->load.mode == LoadStepMode::current) {
    for (double step : record.plan->load.steps) consider(step);
  } else {
    for (const auto& p : record.points) {
      if (p.load_amps) consider(*p.load_amps);
    }
  }
  return smallest;
}

const char* common_settings =
    "set grid\n"
    "set key box\n";

}  // namespace

std::string iv_plot_body(const RunRecord& record) {
  std::vector<XY> measured;
  for (const auto& p : record.points) {
    if (p.load_amps) measured.push_back({*p.load_amps, p.point.dc_volts});
  }
  if (measured.empty()) return "";
  const double largest = largest_load_amps(record);
  const double span = largest > 0.0 ? largest : 1e-3;

  std::string script = data_block("measured", measured);
  std::vector<std::string> plots = {"$measured using 1:2 with points pt 7 ps 1.2 lc rgb '#1f4e9a' title 'measured' noenhanced"};

  const store::SweepResultRecord* result = record.latest_result();
  if (result && result->v_oc_volts && result->z_out_ohms) {
    const double v_oc = *result->v_oc_volts;
    const double z = *result->z_out_ohms;
    double fit_to = record.plan ? record.plan->impedance.fit_max_amps : 0.0;
    if (!(fit_to > 0.0) || fit_to > span) fit_to = span;
    script += data_block("fit", sampled(0.0, fit_to, 2, [&](double i) { return v_oc - z * i; }));
    plots.push_back(fmt::format("$fit using 1:2 with lines lw 2 lc rgb '#2a9d4b' title {}",
                                text(fmt::format("local fit V_oc - Z_out*I (Z_out {:.4g} ohm)", z))));
    const auto i_op = operating_amps(record);
    const auto v_op = i_op ? mean_volts_near(record, *i_op) : std::nullopt;
    if (i_op && v_op) {
      const double half = 0.5 * fit_to;
      script += data_block("tangent", sampled(std::max(0.0, *i_op - half), *i_op + half, 2,
                                              [&](double i) { return *v_op - z * (i - *i_op); }));
      plots.push_back(fmt::format("$tangent using 1:2 with lines lw 2 dt 2 lc rgb '#d1495b' title {}",
                                  text(fmt::format("tangent at {:.4g} A, slope -Z_out", *i_op))));
    }
  }
  if (const auto drive = cascade_drive(record)) {
    script += data_block("model", sampled(0.0, span, 41, [&](double i) { return model_output_volts(*drive, i); }));
    plots.push_back(fmt::format(
        "$model using 1:2 with lines lw 2 dt 4 lc rgb '#8d6a9f' title {}",
        text(fmt::format("Cockcroft-Walton model (n {}, C {:.4g} F, f {:.6g} Hz)", drive->stages,
                           drive->capacitance_farads, drive->frequency_hz))));
  }
  script += common_settings;
  script += "set key top right\n";
  script += fmt::format("set title {}\n", text(title_of(record, "DC output against load current")));
  script += "set xlabel 'load current (A)' noenhanced\nset ylabel 'DC output (V)' noenhanced\n";
  script += "plot ";
  for (std::size_t i = 0; i < plots.size(); ++i) script += (i ? ", \\\n     " : "") + plots[i];
  return script + "\n";
}

std::string ripple_plot_body(const RunRecord& record) {
  std::vector<XY> measured;
  for (const auto& p : record.points) {
    if (p.load_amps && p.point.ripple_pp_volts) measured.push_back({*p.load_amps, *p.point.ripple_pp_volts});
  }
  const auto drive = cascade_drive(record);
  if (measured.empty() && !drive) return "";
  const double largest = largest_load_amps(record);
  const double span = largest > 0.0 ? largest : 1e-3;

  std::string script;
  std::vector<std::string> plots;
  if (!measured.empty()) {
    script += data_block("measured", measured);
    plots.push_back("$measured using 1:2 with points pt 7 ps 1.2 lc rgb '#1f4e9a' title 'measured ripple pp' noenhanced");
  }
  if (drive) {
    script += data_block("model", sampled(0.0, span, 41, [&](double i) {
                           return analysis::predicted_ripple_pp_volts(drive->stages, i, drive->frequency_hz,
                                                                      drive->capacitance_farads);
                         }));
    plots.push_back("$model using 1:2 with lines lw 2 dt 4 lc rgb '#8d6a9f' title 'Cockcroft-Walton model ripple pp' noenhanced");
  }
  script += common_settings;
  script += "set key top left\n";
  script += fmt::format("set title {}\n", text(title_of(record, "ripple against load current")));
  script += "set xlabel 'load current (A)' noenhanced\nset ylabel 'ripple peak-to-peak (V)' noenhanced\n";
  script += "plot ";
  for (std::size_t i = 0; i < plots.size(); ++i) script += (i ? ", \\\n     " : "") + plots[i];
  return script + "\n";
}

std::string soak_plot_body(const RunRecord& record) {
  if (!record.is_soak()) return "";
  struct Panel {
    std::string name;
    std::string label;
    std::optional<double> store::SweepResultRecord::*field;
  };
  const Panel panels[] = {{"v_oc", "V_oc (V)", &store::SweepResultRecord::v_oc_volts},
                          {"z_out", "Z_out (ohm)", &store::SweepResultRecord::z_out_ohms},
                          {"ripple", "ripple pp at rated load (V)", &store::SweepResultRecord::ripple_rated_pp_volts}};
  const std::size_t baseline = record.plan ? static_cast<std::size_t>(record.plan->repeat.baseline_sweeps) : 5;
  const double band_sigma = record.plan ? record.plan->repeat.band_sigma : 3.0;

  std::string data;
  std::vector<std::string> panel_plots;
  for (const auto& panel : panels) {
    std::vector<XY> series;
    std::vector<double> values;
    for (const auto& sweep : record.sweeps) {
      if (sweep.result && (*sweep.result).*(panel.field)) {
        series.push_back({sweep.elapsed_s / 3600.0, *((*sweep.result).*(panel.field))});
        values.push_back(*((*sweep.result).*(panel.field)));
      }
    }
    if (series.empty()) continue;
    data += data_block(panel.name, series);
    std::string plot = fmt::format("set ylabel {}\nplot ${} using 1:2 with linespoints pt 7 ps 0.8 lc rgb '#1f4e9a' title 'measured' noenhanced",
                                   text(panel.label), panel.name);
    const auto band = analysis::control_band(values, baseline, band_sigma);
    if (band) {
      const double from = series.front().x;
      const double to = std::max(series.back().x, from + 1e-9);
      const auto flat = [&](double level) { return std::vector<XY>{{from, level}, {to, level}}; };
      data += data_block(panel.name + "_mean", flat(band->mean));
      data += data_block(panel.name + "_lower", flat(band->lower));
      data += data_block(panel.name + "_upper", flat(band->upper));
      plot += fmt::format(
          ", ${0}_mean using 1:2 with lines lw 1 lc rgb '#555555' title 'baseline mean' noenhanced, "
          "${0}_lower using 1:2 with lines lw 1 dt 2 lc rgb '#d1495b' title {1}, "
          "${0}_upper using 1:2 with lines lw 1 dt 2 lc rgb '#d1495b' notitle",
          panel.name, text(fmt::format("control band (mean +/- {:g} sigma of first {} sweeps)", band_sigma,
                                         band->baseline_points)));
    }
    panel_plots.push_back(plot + "\n");
  }
  if (panel_plots.empty()) return "";
  std::string script = data + common_settings + "set key below horizontal nobox font ',9'\nset xlabel 'time since start (h)' noenhanced\n";
  script += fmt::format("set multiplot layout {},1 title {}\n", panel_plots.size(),
                        text(title_of(record, "soak trend")));
  for (const auto& plot : panel_plots) script += plot;
  return script + "unset multiplot\n";
}

PlotFiles write_run_plots(const RunRecord& record, const std::filesystem::path& directory,
                          const std::string& gnuplot_command) {
  struct Figure {
    const char* name;
    std::string body;
    int height_px;
    const char* nothing_to_draw;
  };
  const Figure figures[] = {
      {"iv", iv_plot_body(record), 600, "no point has a load current"},
      {"ripple", ripple_plot_body(record), 600, "no ripple reading and no plan to model it"},
      {"soak", soak_plot_body(record), 1000,
       record.is_soak() ? "no analysed sweep with a time" : "not a soak run"},
  };
  PlotFiles files;
  for (const auto& figure : figures) {
    if (figure.body.empty()) {
      files.skipped.push_back(fmt::format("{} plot: {}", figure.name, figure.nothing_to_draw));
      continue;
    }
    const std::string stem = fmt::format("run-{}-{}", record.header.run_id, figure.name);
    const auto svg = directory / (stem + ".svg");
    const auto png = directory / (stem + ".png");
    std::string script;
    script += fmt::format("set terminal svg size 800,{} mouse standalone\nset output {}\n", figure.height_px,
                          quoted(svg.string()));
    script += figure.body + "unset output\nreset\n";
    script += fmt::format("set terminal pngcairo size 800,{}\nset output {}\n", figure.height_px, quoted(png.string()));
    script += figure.body + "unset output\n";
    run_gnuplot(script, gnuplot_command);
    files.written.push_back(svg);
    files.written.push_back(png);
  }
  return files;
}

}  // namespace zout::report
