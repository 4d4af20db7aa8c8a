// `zout report` and `zout export` as real processes on a database written with StoreWriter
// (tests/support/report_database.h): text output and exit codes, plots drawn by gnuplot whose
// SVG markers land on the stored points, and exports that read back to the stored values.
#include <catch2/catch.hpp>

#include <nlohmann/json.hpp>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <regex>
#include <sstream>

#include "tests/support/temp_dir.h"
#include "daemon/store/read_only_query.h"
#include "tests/support/child_process.h"
#include "tests/support/report_database.h"

using namespace zout;
using namespace zout::test;
using namespace std::chrono;
namespace fs = std::filesystem;

namespace {

ChildResult zout_cli(const std::vector<std::string>& args) {
  std::vector<std::string> argv = {ZOUT_CLI_PATH};
  argv.insert(argv.end(), args.begin(), args.end());
  return run_child(argv, 60s);
}

// Every row of `sql`, each value as a double (NULL as NaN).
std::vector<std::vector<double>> select_numbers(const fs::path& db, const std::string& sql) {
  std::vector<std::vector<double>> rows;
  store::ReadOnlyQuery query(db);
  query.run(sql, milliseconds(0), [](const auto&) {}, [&rows](const std::vector<store::QueryValue>& row) {
    std::vector<double> values;
    for (const auto& v : row) {
      if (const auto* d = std::get_if<double>(&v)) {
        values.push_back(*d);
      } else if (const auto* i = std::get_if<std::int64_t>(&v)) {
        values.push_back(static_cast<double>(*i));
      } else {
        values.push_back(std::nan(""));
      }
    }
    rows.push_back(values);
  });
  return rows;
}

// RFC 4180 records (quoted fields with doubled quotes, CRLF line ends).
std::vector<std::vector<std::string>> parse_csv(const std::string& text) {
  std::vector<std::vector<std::string>> rows(1);
  std::string field;
  bool quoted = false;
  for (std::size_t i = 0; i < text.size(); ++i) {
    const char c = text[i];
    if (quoted) {
      if (c == '"' && i + 1 < text.size() && text[i + 1] == '"') {
        field += '"';
        ++i;
      } else if (c == '"') {
        quoted = false;
      } else {
        field += c;
      }
    } else if (c == '"') {
      quoted = true;
    } else if (c == ',') {
      rows.back().push_back(field);
      field.clear();
    } else if (c == '\r' && i + 1 < text.size() && text[i + 1] == '\n') {
      rows.back().push_back(field);
      field.clear();
      rows.emplace_back();
      ++i;
    } else {
      field += c;
    }
  }
  if (rows.back().empty()) rows.pop_back();
  return rows;
}

// The plot area and axis ranges an SVG written with `mouse standalone` carries.
struct SvgAxes {
  double plot_xmin = 0, plot_xmax = 0, plot_ybot = 0, plot_ytop = 0;
  double axis_xmin = 0, axis_xmax = 0, axis_ymin = 0, axis_ymax = 0;
};

double svg_number(const std::string& svg, const std::string& name) {
  const std::regex pattern("gnuplot_svg\\." + name + " = ([-+0-9.eE]+);");
  std::smatch m;
  if (!std::regex_search(svg, m, pattern)) FAIL("no gnuplot_svg." << name << " in the SVG");
  return std::stod(m[1].str());
}

SvgAxes svg_axes(const std::string& svg) {
  return {svg_number(svg, "plot_xmin"),      svg_number(svg, "plot_xmax"),      svg_number(svg, "plot_ybot"),
          svg_number(svg, "plot_ytop"),      svg_number(svg, "plot_axis_xmin"), svg_number(svg, "plot_axis_xmax"),
          svg_number(svg, "plot_axis_ymin"), svg_number(svg, "plot_axis_ymax")};
}

// The point markers of the plot titled `title`, in data coordinates; the legend's sample
// marker (inside the plot's *_keyentry group) is left out.
std::vector<std::pair<double, double>> svg_markers(const std::string& svg, const std::string& title) {
  const std::string opening = "><title>" + title + "</title>";
  const auto start = svg.find(opening);
  if (start == std::string::npos) FAIL("no plot titled " << title << " in the SVG");
  const auto end = svg.find(" ><title>", start + opening.size());  // the next plot's group
  std::istringstream lines(svg.substr(start, end - start));
  const SvgAxes a = svg_axes(svg);
  const std::regex marker("<use xlink:href='#gpPt[0-9]+' transform='translate\\(([-0-9.]+),([-0-9.]+)\\)");
  std::vector<std::pair<double, double>> points;
  int key_depth = 0;
  for (std::string line; std::getline(lines, line);) {
    if (line.find("_keyentry") != std::string::npos) {
      key_depth = 1;
      continue;
    }
    if (key_depth > 0) {
      if (line.find("<g ") != std::string::npos) ++key_depth;
      if (line.find("</g>") != std::string::npos) --key_depth;
      continue;
    }
    std::smatch m;
    if (std::regex_search(line, m, marker)) {
      const double px = std::stod(m[1].str());
      const double py = std::stod(m[2].str());
      points.emplace_back(a.axis_xmin + (px - a.plot_xmin) / (a.plot_xmax - a.plot_xmin) * (a.axis_xmax - a.axis_xmin),
                          a.axis_ymin + (a.plot_ybot - py) / (a.plot_ybot - a.plot_ytop) * (a.axis_ymax - a.axis_ymin));
    }
  }
  return points;
}

}  // namespace

TEST_CASE("zout report prints a run's report and exits 0", "[report]") {
  TempDir dir("zout-report-cli");
  const ReportDatabase db = make_report_database(dir.path);
  const auto r = zout_cli({"report", std::to_string(db.production_run), "--db", db.file.string()});
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.err.empty());
  CHECK(r.out.find("unit CW5-0042 (CW5), slot 3") != std::string::npos);
  CHECK(r.out.find("119.3 kΩ ± 1.5 kΩ") != std::string::npos);
  CHECK(r.out.find("started   2026-12-01T21:15:14Z\n") != std::string::npos);
  CHECK(r.out.find("Verdict: fail") != std::string::npos);

  const auto json = zout_cli({"report", std::to_string(db.soak_run), "--json", "--db", db.file.string()});
  REQUIRE(json.exit_code == 0);
  const auto document = nlohmann::json::parse(json.out);
  CHECK(document["run"]["serial"] == "CW5-0043");
  CHECK(document["drift"]["v_oc_volts_per_hour"].get<double>() == -0.5);
}

TEST_CASE("zout runs and zout report show times in UTC with Z, or local time with its offset", "[report]") {
  TempDir dir("zout-report-cli");
  const ReportDatabase db = make_report_database(dir.path);
  const auto utc = zout_cli({"runs", "--db", db.file.string()});
  INFO(utc.out << utc.err);
  REQUIRE(utc.exit_code == 0);
  CHECK(utc.out.find("2026-12-01T21:15:14Z") != std::string::npos);  // the production run's start
  CHECK(utc.out.find("2026-12-01T21:16:54Z") != std::string::npos);  // the soak's, 100 s later
  CHECK(utc.out.find("1:03") != std::string::npos);                  // the production run took 63 s

  // The children inherit TZ: 3 h 30 min behind UTC, no summer time.
  const char* saved = std::getenv("TZ");
  const std::string old_zone = saved ? saved : "";
  ::setenv("TZ", "NST+3:30", 1);
  const auto local_runs = zout_cli({"runs", "--local-time", "--db", db.file.string()});
  const auto local_report =
      zout_cli({"report", std::to_string(db.production_run), "--local-time", "--db", db.file.string()});
  const auto as_json = zout_cli({"runs", "--local-time", "--json", "--db", db.file.string()});
  if (saved) {
    ::setenv("TZ", old_zone.c_str(), 1);
  } else {
    ::unsetenv("TZ");
  }
  REQUIRE(local_runs.exit_code == 0);
  CHECK(local_runs.out.find("2026-12-01T17:45:14-03:30") != std::string::npos);
  CHECK(local_runs.out.find("21:15:14") == std::string::npos);
  REQUIRE(local_report.exit_code == 0);
  CHECK(local_report.out.find("started   2026-12-01T17:45:14-03:30\n") != std::string::npos);
  // JSON keeps the stored UTC text whatever the option.
  REQUIRE(as_json.exit_code == 0);
  const auto rows = nlohmann::json::parse(as_json.out);
  REQUIRE(rows.size() == 2);
  CHECK(rows[1]["started_at"] == "2026-12-01T21:15:14.123Z");
}

TEST_CASE("zout report and export name a missing run or database and exit 1", "[report]") {
  TempDir dir("zout-report-cli");
  const ReportDatabase db = make_report_database(dir.path);
  const auto r = zout_cli({"report", "99", "--db", db.file.string()});
  CHECK(r.exit_code == 1);
  CHECK(r.out.empty());
  CHECK(r.err == "zout report: no run 99 in " + db.file.string() + "\n");

  const auto e = zout_cli({"export", "99", "--format", "csv", "--db", db.file.string()});
  CHECK(e.exit_code == 1);
  CHECK(e.err == "zout export: no run 99 in " + db.file.string() + "\n");

  const auto missing = zout_cli({"report", "1", "--db", (dir.path / "absent.db").string()});
  CHECK(missing.exit_code == 1);
  CHECK(missing.err.find((dir.path / "absent.db").string() + ": no such file") != std::string::npos);

  const auto usage = zout_cli({"export", "1", "--format", "xml", "--db", db.file.string()});
  CHECK(usage.exit_code == 2);
  const auto help = zout_cli({"report", "--help"});
  CHECK(help.exit_code == 0);
  CHECK(help.out.find("Example: zout report 42 --plot plots/") != std::string::npos);
}

TEST_CASE("zout report --plot writes SVG and PNG plots whose markers are the stored points", "[report]") {
  TempDir dir("zout-report-plot");
  const ReportDatabase db = make_report_database(dir.path);
  const fs::path plots = dir.path / "plots" / "new";
  const std::string id = std::to_string(db.production_run);
  const auto r = zout_cli({"report", id, "--plot", plots.string(), "--db", db.file.string()});
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  for (const char* name : {"iv", "ripple"}) {
    for (const char* ext : {"svg", "png"}) {
      const fs::path file = plots / ("run-" + id + "-" + name + "." + ext);
      INFO(file);
      REQUIRE(fs::exists(file));
      CHECK(fs::file_size(file) > 1000);
      CHECK(r.out.find(file.string()) != std::string::npos);
      if (std::string(ext) == "png") CHECK(file_bytes(file).substr(0, 8) == "\x89PNG\r\n\x1a\n");
    }
  }
  CHECK(!fs::exists(plots / ("run-" + id + "-soak.svg")));
  CHECK(r.out.find("skipped soak plot: not a soak run") != std::string::npos);

  const std::string svg = file_bytes(plots / ("run-" + id + "-iv.svg"));
  CHECK(svg.find("CW5-0042, run " + id) != std::string::npos);
  // One prefix per axis from its data: the largest load current is 1.00033 mA, the outputs
  // are 286 V to 400 V (the model at no load).
  CHECK(svg.find("load current (mA)") != std::string::npos);
  CHECK(svg.find("DC output (V)") != std::string::npos);
  CHECK(svg.find("local fit V_oc - Z_out*I (Z_out 119.3 kΩ)") != std::string::npos);
  const double amps_on_axis = 1e3;  // mA
  const SvgAxes axes = svg_axes(svg);
  const double x_span = axes.axis_xmax - axes.axis_xmin;
  const double y_span = axes.axis_ymax - axes.axis_ymin;
  const auto markers = svg_markers(svg, "measured");
  const auto stored = select_numbers(db.file, "SELECT load_amps, dc_volts FROM iv_curve WHERE run_id = " + id +
                                                   " ORDER BY sweep, step");
  REQUIRE(stored.size() == 6);
  CHECK(markers.size() == stored.size());
  for (const auto& point : stored) {
    INFO("stored point " << point[0] << " A, " << point[1] << " V");
    const bool found = std::any_of(markers.begin(), markers.end(), [&](const auto& m) {
      return std::abs(m.first - point[0] * amps_on_axis) <= 0.01 * x_span && std::abs(m.second - point[1]) <= 0.01 * y_span;
    });
    CHECK(found);
  }
  // The ripple plot's measured markers too.
  const std::string ripple_svg = file_bytes(plots / ("run-" + id + "-ripple.svg"));
  const auto ripple_markers = svg_markers(ripple_svg, "measured ripple pp");
  const auto ripple_axes = svg_axes(ripple_svg);
  CHECK(ripple_svg.find("load current (mA)") != std::string::npos);
  CHECK(ripple_svg.find("ripple peak-to-peak (V)") != std::string::npos);  // up to 16.6 V
  const auto ripple = select_numbers(db.file, "SELECT load_amps, ripple_pp_volts FROM iv_curve WHERE run_id = " + id);
  CHECK(ripple_markers.size() == ripple.size());
  for (const auto& point : ripple) {
    const bool found = std::any_of(ripple_markers.begin(), ripple_markers.end(), [&](const auto& m) {
      return std::abs(m.first - point[0] * amps_on_axis) <= 0.01 * (ripple_axes.axis_xmax - ripple_axes.axis_xmin) &&
             std::abs(m.second - point[1]) <= 0.01 * (ripple_axes.axis_ymax - ripple_axes.axis_ymin);
    });
    CHECK(found);
  }
}

TEST_CASE("a soak run also gets its trend plot, a missing gnuplot is named", "[report]") {
  TempDir dir("zout-report-plot");
  const ReportDatabase db = make_report_database(dir.path);
  const std::string id = std::to_string(db.soak_run);
  const auto r = zout_cli({"report", id, "--plot", dir.path.string(), "--db", db.file.string()});
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  const fs::path soak_svg = dir.path / ("run-" + id + "-soak.svg");
  REQUIRE(fs::exists(soak_svg));
  CHECK(fs::file_size(dir.path / ("run-" + id + "-soak.png")) > 1000);
  const std::string svg = file_bytes(soak_svg);
  CHECK(svg.find("time since start (h)") != std::string::npos);
  CHECK(svg.find("Z_out (kΩ)") != std::string::npos);  // 118 kΩ and up
  CHECK(svg.find("V_oc (V)") != std::string::npos);
  CHECK(svg.find("control band (mean +/- 3 sigma of first 3 sweeps)") != std::string::npos);

  // With no gnuplot on PATH the report is still printed, and the failure names the command.
  const char* saved = std::getenv("PATH");
  const std::string old_path = saved ? saved : "";
  ::setenv("PATH", (dir.path / "no-such-bin").c_str(), 1);
  const auto without = zout_cli({"report", id, "--plot", dir.path.string(), "--db", db.file.string()});
  ::setenv("PATH", old_path.c_str(), 1);
  CHECK(without.exit_code == 1);
  CHECK(without.err.find("zout report: plots: cannot run \"gnuplot\"") != std::string::npos);
  CHECK(without.err.find("gnuplot-nox") != std::string::npos);
}

TEST_CASE("zout export writes every reading as CSV and the run as JSON, reading back exactly", "[report]") {
  TempDir dir("zout-report-export");
  const ReportDatabase db = make_report_database(dir.path);
  const std::string id = std::to_string(db.production_run);
  const auto stored = select_numbers(
      db.file,
      "SELECT rd.point_id, rd.seq, rd.value, p.dc_volts, p.step_index FROM reading rd JOIN point p ON p.point_id = "
      "rd.point_id JOIN sweep w ON w.sweep_id = p.sweep_id WHERE w.run_id = " +
          id + " ORDER BY w.sweep_index, p.step_index, rd.seq");
  REQUIRE(stored.size() == 30);

  const auto csv = zout_cli({"export", id, "--format", "csv", "--db", db.file.string()});
  REQUIRE(csv.exit_code == 0);
  const auto rows = parse_csv(csv.out);
  REQUIRE(rows.size() == stored.size() + 1);
  const auto& header = rows[0];
  const auto column = [&](const std::string& name) {
    const auto it = std::find(header.begin(), header.end(), name);
    REQUIRE(it != header.end());
    return static_cast<std::size_t>(it - header.begin());
  };
  for (std::size_t i = 0; i < stored.size(); ++i) {
    const auto& row = rows[i + 1];
    INFO("reading " << i);
    REQUIRE(row.size() == header.size());
    CHECK(row[column("run_id")] == id);
    CHECK(std::stod(row[column("point_id")]) == stored[i][0]);
    CHECK(std::stod(row[column("reading_seq")]) == stored[i][1]);
    CHECK(std::stod(row[column("reading_value")]) == stored[i][2]);
    CHECK(std::stod(row[column("dc_volts")]) == stored[i][3]);
    CHECK(std::stod(row[column("step")]) == stored[i][4] + 1);  // the export counts steps from 1
  }

  const fs::path out_file = dir.path / "run.json";
  const auto json = zout_cli({"export", id, "--format", "json", "--output", out_file.string(), "--db", db.file.string()});
  REQUIRE(json.exit_code == 0);
  CHECK(json.out.empty());
  const auto document = nlohmann::json::parse(file_bytes(out_file));
  CHECK(document["run"]["run_id"] == db.production_run);
  CHECK(document["plan"]["dut"]["capacitance_farads"].get<double>() == 47e-9);
  REQUIRE(document["points"].size() == 6);
  std::size_t k = 0;
  for (const auto& point : document["points"]) {
    for (const auto& reading : point["readings"]) {
      REQUIRE(k < stored.size());
      CHECK(point["point_id"].get<double>() == stored[k][0]);
      CHECK(reading["seq"].get<double>() == stored[k][1]);
      CHECK(reading["value"].get<double>() == stored[k][2]);
      CHECK(point["dc_volts"].get<double>() == stored[k][3]);
      ++k;
    }
  }
  CHECK(k == stored.size());
  CHECK(document["sweep_results"][0]["z_out_ohms"].get<double>() == 119250.0);
  CHECK(document["events"].size() == 3);
}
