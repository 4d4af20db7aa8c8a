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
#include "daemon/text/quantity_names.h"
#include "daemon/text/si_text.h"

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
std::string gnuplot_text(const std::string& words) { return quoted(words) + " noenhanced"; }

// One axis of a plot: the quantity, its SI unit and the one prefix its data is shown in,
// chosen from the largest magnitude on the axis ("load current (mA)", not 0.0002 A).
struct Axis {
  std::string quantity;
  std::string unit;
  text::SiPrefix prefix;

  Axis(std::string quantity_name, std::string si_unit, double largest_magnitude)
      : quantity(std::move(quantity_name)), unit(std::move(si_unit)), prefix(text::si_prefix_for(largest_magnitude)) {}
  // The axis label, e.g. 'load current (µA)' as gnuplot text.
  std::string label() const { return gnuplot_text(quantity + " (" + std::string(prefix.symbol) + unit + ")"); }
  double scaled(double si_value) const { return si_value / prefix.factor; }
};

// A plot with no unit scaling (hours since start).
const Axis& unscaled_axis() {
  static const Axis axis("", "", 0.0);
  return axis;
}

// The largest |y| of every row of `blocks`.
double largest_y(const std::vector<std::vector<XY>>& blocks) {
  double largest = 0.0;
  for (const auto& rows : blocks) {
    for (const auto& r : rows) largest = std::max(largest, std::abs(r.y));
  }
  return largest;
}

// A named data block in the axes' units, values written so they read back exactly.
std::string data_block(const std::string& name, const std::vector<XY>& rows, const Axis& x_axis, const Axis& y_axis) {
  std::string out = "$" + name + " << EOD\n";
  for (const auto& r : rows) out += fmt::format("{:.17g} {:.17g}\n", x_axis.scaled(r.x), y_axis.scaled(r.y));
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
    "set encoding utf8\n"
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

  // Every series in A and V first; the axes' prefixes come from all of them.
  std::vector<std::pair<std::string, std::vector<XY>>> blocks = {{"measured", measured}};
  std::vector<std::string> plots = {"$measured using 1:2 with points pt 7 ps 1.2 lc rgb '#1f4e9a' title 'measured' noenhanced"};

  const store::SweepResultRecord* result = record.latest_result();
  if (result && result->v_oc_volts && result->z_out_ohms) {
    const double v_oc = *result->v_oc_volts;
    const double z = *result->z_out_ohms;
    double fit_to = record.plan ? record.plan->impedance.fit_max_amps : 0.0;
    if (!(fit_to > 0.0) || fit_to > span) fit_to = span;
    blocks.emplace_back("fit", sampled(0.0, fit_to, 2, [&](double i) { return v_oc - z * i; }));
    plots.push_back(fmt::format("$fit using 1:2 with lines lw 2 lc rgb '#2a9d4b' title {}",
                                gnuplot_text(fmt::format("local fit {0} - {1}*I ({1} {2})", text::quantity::v_oc,
                                                 text::quantity::z_out, text::si_text(z, "Ω", 4)))));
    const auto i_op = operating_amps(record);
    const auto v_op = i_op ? mean_volts_near(record, *i_op) : std::nullopt;
    if (i_op && v_op) {
      const double half = 0.5 * fit_to;
      blocks.emplace_back("tangent", sampled(std::max(0.0, *i_op - half), *i_op + half, 2,
                                             [&](double i) { return *v_op - z * (i - *i_op); }));
      plots.push_back(fmt::format("$tangent using 1:2 with lines lw 2 dt 2 lc rgb '#d1495b' title {}",
                                  gnuplot_text(fmt::format("tangent at {}, slope -{}", text::si_text(*i_op, "A", 4),
                                                   text::quantity::z_out))));
    }
  }
  if (const auto drive = cascade_drive(record)) {
    blocks.emplace_back("model", sampled(0.0, span, 41, [&](double i) { return model_output_volts(*drive, i); }));
    plots.push_back(fmt::format(
        "$model using 1:2 with lines lw 2 dt 4 lc rgb '#8d6a9f' title {}",
        gnuplot_text(fmt::format("Cockcroft-Walton model (n {}, C {}, f {})", drive->stages,
                         text::si_text(drive->capacitance_farads, "F", 4), text::si_text(drive->frequency_hz, "Hz", 4)))));
  }
  std::vector<std::vector<XY>> series;
  for (const auto& block : blocks) series.push_back(block.second);
  const Axis x_axis("load current", "A", span);
  const Axis y_axis("DC output", "V", largest_y(series));
  std::string script;
  for (const auto& [name, rows] : blocks) script += data_block(name, rows, x_axis, y_axis);
  script += common_settings;
  script += "set key top right\n";
  script += fmt::format("set title {}\n", gnuplot_text(title_of(record, "DC output against load current")));
  script += fmt::format("set xlabel {}\nset ylabel {}\n", x_axis.label(), y_axis.label());
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

  std::vector<std::pair<std::string, std::vector<XY>>> blocks;
  std::vector<std::string> plots;
  if (!measured.empty()) {
    blocks.emplace_back("measured", measured);
    plots.push_back("$measured using 1:2 with points pt 7 ps 1.2 lc rgb '#1f4e9a' title 'measured ripple pp' noenhanced");
  }
  if (drive) {
    blocks.emplace_back("model", sampled(0.0, span, 41, [&](double i) {
                          return analysis::predicted_ripple_pp_volts(drive->stages, i, drive->frequency_hz,
                                                                     drive->capacitance_farads);
                        }));
    plots.push_back("$model using 1:2 with lines lw 2 dt 4 lc rgb '#8d6a9f' title 'Cockcroft-Walton model ripple pp' noenhanced");
  }
  std::vector<std::vector<XY>> series;
  for (const auto& block : blocks) series.push_back(block.second);
  const Axis x_axis("load current", "A", span);
  const Axis y_axis("ripple peak-to-peak", "V", largest_y(series));
  std::string script;
  for (const auto& [name, rows] : blocks) script += data_block(name, rows, x_axis, y_axis);
  script += common_settings;
  script += "set key top left\n";
  script += fmt::format("set title {}\n", gnuplot_text(title_of(record, "ripple against load current")));
  script += fmt::format("set xlabel {}\nset ylabel {}\n", x_axis.label(), y_axis.label());
  script += "plot ";
  for (std::size_t i = 0; i < plots.size(); ++i) script += (i ? ", \\\n     " : "") + plots[i];
  return script + "\n";
}

std::string soak_plot_body(const RunRecord& record) {
  if (!record.is_soak()) return "";
  struct Panel {
    std::string name;
    std::string quantity;
    std::string unit;
    std::optional<double> store::SweepResultRecord::*field;
  };
  const Panel panels[] = {{"v_oc", text::quantity::v_oc, "V", &store::SweepResultRecord::v_oc_volts},
                          {"z_out", text::quantity::z_out, "Ω", &store::SweepResultRecord::z_out_ohms},
                          {"ripple", std::string(text::quantity::ripple_pp) + " at rated load", "V",
                           &store::SweepResultRecord::ripple_rated_pp_volts}};
  const std::size_t baseline = record.plan ? static_cast<std::size_t>(record.plan->repeat.baseline_sweeps) : 5;
  const double band_sigma = record.plan ? record.plan->repeat.band_sigma : 3.0;

  std::string data;
  std::vector<std::string> panel_plots;
  for (const auto& panel : panels) {
    std::vector<XY> series;  // hours, SI unit
    std::vector<double> values;
    for (const auto& sweep : record.sweeps) {
      if (sweep.result && (*sweep.result).*(panel.field)) {
        series.push_back({sweep.elapsed_s / 3600.0, *((*sweep.result).*(panel.field))});
        values.push_back(*((*sweep.result).*(panel.field)));
      }
    }
    if (series.empty()) continue;
    const auto band = analysis::control_band(values, baseline, band_sigma);
    std::vector<std::vector<XY>> all = {series};
    if (band) all.push_back({{0.0, band->lower}, {0.0, band->upper}});
    const Axis y_axis(panel.quantity, panel.unit, largest_y(all));
    const Axis& hours = unscaled_axis();
    data += data_block(panel.name, series, hours, y_axis);
    std::string plot = fmt::format("set ylabel {}\nplot ${} using 1:2 with linespoints pt 7 ps 0.8 lc rgb '#1f4e9a' title 'measured' noenhanced",
                                   y_axis.label(), panel.name);
    if (band) {
      const double from = series.front().x;
      const double to = std::max(series.back().x, from + 1e-9);
      const auto flat = [&](double level) { return std::vector<XY>{{from, level}, {to, level}}; };
      data += data_block(panel.name + "_mean", flat(band->mean), hours, y_axis);
      data += data_block(panel.name + "_lower", flat(band->lower), hours, y_axis);
      data += data_block(panel.name + "_upper", flat(band->upper), hours, y_axis);
      plot += fmt::format(
          ", ${0}_mean using 1:2 with lines lw 1 lc rgb '#555555' title 'baseline mean' noenhanced, "
          "${0}_lower using 1:2 with lines lw 1 dt 2 lc rgb '#d1495b' title {1}, "
          "${0}_upper using 1:2 with lines lw 1 dt 2 lc rgb '#d1495b' notitle",
          panel.name, gnuplot_text(fmt::format("control band (mean +/- {:g} sigma of first {} sweeps)", band_sigma,
                                         band->baseline_points)));
    }
    panel_plots.push_back(plot + "\n");
  }
  if (panel_plots.empty()) return "";
  std::string script = data + common_settings + "set key below horizontal nobox font ',9'\nset xlabel 'time since start (h)' noenhanced\n";
  script += fmt::format("set multiplot layout {},1 title {}\n", panel_plots.size(),
                        gnuplot_text(title_of(record, "soak trend")));
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
