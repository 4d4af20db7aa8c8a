#pragma once
// Plots of one run, drawn by gnuplot (gnuplot_runner.h), each as SVG (`svg ... mouse
// standalone`, so the file carries its axis ranges as gnuplot_svg.plot_axis_xmin etc.) and
// PNG (pngcairo):
//   run-<id>-iv      measured points (load current A against DC output V), the local fit's
//                    line V_oc − Z_out·I, the tangent at the operating current (slope −Z_out
//                    through the measured output there) and the Cockcroft–Walton prediction
//                    V_oc,model − ΔV(I) (cascade_model.h)
//   run-<id>-ripple  measured ripple pp against load current, and the model's δV(I)
//   run-<id>-soak    soak runs only: V_oc, Z_out and ripple pp at the rated load against hours,
//                    each with its control band (mean ± band_sigma·σ of the plan's first
//                    baseline_sweeps sweeps; drift.h control_band), one panel each
// Each axis shows its data in one SI prefix chosen from the axis's largest magnitude
// (daemon/text si_prefix_for): the data written to gnuplot is scaled to it and the label says
// so ("load current (mA)", "Z_out (kΩ)"). A plot with nothing to draw is skipped, with the
// reason.

#include <filesystem>
#include <string>
#include <vector>

#include "daemon/report/run_record.h"

namespace zout::report {

struct PlotFiles {
  std::vector<std::filesystem::path> written;  // every file written, SVG then PNG per plot
  std::vector<std::string> skipped;            // "ripple plot: no point has a ripple reading"
};

// Writes the plots of `record` into `directory` (which must exist). Throws GnuplotError
// naming the command when gnuplot is missing or fails.
PlotFiles write_run_plots(const RunRecord& record, const std::filesystem::path& directory,
                          const std::string& gnuplot_command = "gnuplot");

// The gnuplot script of each plot without its terminal and output lines, for inspection:
// data blocks (in the axes' prefixed units) first, then the plot commands. Empty when the plot has nothing to draw.
std::string iv_plot_body(const RunRecord& record);
std::string ripple_plot_body(const RunRecord& record);
std::string soak_plot_body(const RunRecord& record);

}  // namespace zout::report
