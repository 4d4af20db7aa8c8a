// Reference check of the impedance and whole-curve fits (daemon/analysis/impedance.h,
// diode_curve_fit.h, source_resistance.h) on I–V curves produced by ngspice (Debian package
// `ngspice`, run in batch mode from this test on a netlist it writes to a temporary folder).
//
// The circuit: a 3-stage half-wave Cockcroft–Walton cascade, 2.5 V peak at 1 kHz through a
// 50 Ω source resistance, six 1 µF capacitors, a silicon-like diode (IS = 1 nA, N = 1.8,
// RS = 1 Ω), loaded by a DC current source. Each load current is one transient run from
// initial conditions near the loaded steady state (capacitors charged to the expected
// output share); the output's mean over the last 10 cycles (on a uniform 10 µs grid) is the
// point's DC volts. Low currents settle slowest, so they run longer.
//
// Checks:
//   * local Z_out at the default operating current (the plan's smallest non-zero step) and at
//     100 µA within 3 % of ngspice's own slope there (a five-point central difference on a
//     dense 2.5 µA sweep around each current);
//   * the diode-curve fit's R, and the linear region's R, within 10 % of the Cockcroft–Walton
//     value 22/(fC) = 22.0 kΩ (Kuffel, Zaengl & Kuffel, §2.2; the formula idealises the charge
//     transfer, ngspice's mean-output slope from 50 to 200 µA is ≈ 23.1 kΩ);
//   * without currents near the lumped diode's knee (nanoamps here) V₀ and I₀ are reported
//     not identifiable, cleanly.

#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include "daemon/analysis/cascade_model.h"
#include "daemon/analysis/diode_curve_fit.h"
#include "daemon/analysis/impedance.h"
#include "daemon/analysis/source_resistance.h"

using namespace zout::analysis;

namespace {

// Microamps as integer tenths, so 47.5 µA is an exact key.
using Key = long;
Key key(double microamps) { return std::lround(microamps * 10.0); }

const std::vector<double> plan_microamps{50, 60, 70, 80, 90, 100, 150, 200, 250, 300};
const std::vector<double> low_microamps{5, 10, 20, 30};
const std::vector<double> dense_microamps{45, 47.5, 52.5, 55, 95, 97.5, 102.5, 105};

std::string current_list(const std::vector<double>& microamps) {
  std::ostringstream out;
  for (double ua : microamps) out << ' ' << ua << "e-6";
  return out.str();
}

// One transient run per current in `currents`; `tstop_s` long, averaged over the last 10 ms.
std::string sweep_block(const std::vector<double>& microamps, const std::string& tstop_s,
                        long average_from_index, long average_to_index) {
  std::ostringstream out;
  out << "foreach cur" << current_list(microamps) << "\n"
      << "  alter iload dc = $cur\n"
      // Expected output ≈ 12.3 V − 23 kΩ·I: pumping capacitor C1 holds a sixth, the others a third.
      << "  let k1 = -(12.3 - 23000*$cur)/6\n"
      << "  let k2 = 2*k1\n"
      << "  alter c1 ic = $&k1\n"
      << "  alter c2 ic = $&k2\n  alter c3 ic = $&k2\n  alter c4 ic = $&k2\n"
      << "  alter c5 ic = $&k2\n  alter c6 ic = $&k2\n"
      << "  tran 10u " << tstop_s << " 0 10u uic\n"
      << "  linearize v(s3)\n"
      << "  let vavg = mean(v(s3)[" << average_from_index << "," << average_to_index << "])\n"
      << "  echo \"RESULT $cur\"\n"
      << "  print vavg\n"
      << "  destroy all\n"
      << "end\n";
  return out.str();
}

std::string netlist() {
  std::ostringstream out;
  out << "* 3-stage half-wave Cockcroft-Walton cascade, mean output vs load current\n"
         "V1 src 0 SIN(0 2.5 1k)\n"
         "Rs src in 50\n"
         "C1 in p1 1u\nC3 p1 p2 1u\nC5 p2 p3 1u\n"
         "C2 0 s1 1u\nC4 s1 s2 1u\nC6 s2 s3 1u\n"
         "D1 0 p1 DSI\nD2 p1 s1 DSI\nD3 s1 p2 DSI\nD4 p2 s2 DSI\nD5 s2 p3 DSI\nD6 p3 s3 DSI\n"
         "Iload s3 0 DC 0\n"
         ".model DSI D(IS=1e-9 N=1.8 RS=1)\n"
         ".control\n"
         "set noaskquit\n"
         "set numdgt=12\n";
  // 0.5 s for the slow low currents (average 0.49..0.5 s), 0.2 s for the rest.
  out << sweep_block(low_microamps, "0.5", 49000, 49999);
  std::vector<double> rest = plan_microamps;
  rest.insert(rest.end(), dense_microamps.begin(), dense_microamps.end());
  out << sweep_block(rest, "0.2", 19000, 19999);
  out << "quit\n.endc\n.end\n";
  return out.str();
}

// Runs ngspice once and returns mean output volts by current key.
std::map<Key, double> run_ngspice() {
  REQUIRE(std::system("command -v ngspice > /dev/null 2>&1") == 0);
  char pattern[] = "/tmp/zout-ngspice-XXXXXX";
  REQUIRE(mkdtemp(pattern) != nullptr);
  const std::filesystem::path dir(pattern);
  {
    std::ofstream file(dir / "cascade.cir");
    file << netlist();
  }
  const std::string command = "cd '" + dir.string() + "' && ngspice -b cascade.cir > out.txt 2>&1";
  const int status = std::system(command.c_str());
  std::ifstream in(dir / "out.txt");
  std::map<Key, double> volts;
  std::string line;
  double current = -1.0;
  while (std::getline(in, line)) {
    if (line.rfind("RESULT ", 0) == 0) {
      current = std::stod(line.substr(7));
    } else if (line.rfind("vavg = ", 0) == 0 && current >= 0.0) {
      volts[key(current * 1e6)] = std::stod(line.substr(7));
      current = -1.0;
    }
  }
  std::filesystem::remove_all(dir);
  REQUIRE(status == 0);
  return volts;
}

const std::map<Key, double>& curve() {
  static const std::map<Key, double> volts = run_ngspice();
  return volts;
}

double volts_at(double microamps) {
  const auto it = curve().find(key(microamps));
  REQUIRE(it != curve().end());
  return it->second;
}

// ngspice's slope −dV/dI at a current, five-point central difference with h = 2.5 µA.
double ngspice_slope_ohms(double microamps) {
  const double h = 2.5e-6;
  const double d = volts_at(microamps - 5) - 8 * volts_at(microamps - 2.5) +
                   8 * volts_at(microamps + 2.5) - volts_at(microamps + 5);
  return -d / (12 * h);
}

std::vector<IvPoint> points_at(const std::vector<double>& microamps) {
  std::vector<IvPoint> points;
  for (double ua : microamps) points.push_back({ua * 1e-6, volts_at(ua), 0.0});
  return points;
}

}  // namespace

// One test case with a section per check, so ngspice runs once per test process.
TEST_CASE("ngspice cascade: Z_out and fitted R against ngspice's I-V curve", "[analysis]") {
  SECTION("the circuit is the one described") {
    const std::size_t runs = low_microamps.size() + plan_microamps.size() + dense_microamps.size();
    REQUIRE(curve().size() == runs);
    // ngspice's mean-output chord slope between 50 and 200 µA, ≈ 23.1 kΩ.
    const double chord = (volts_at(50) - volts_at(200)) / 150e-6;
    CHECK(chord == Approx(23.1e3).epsilon(0.02));
  }

  SECTION("local Z_out matches the curve's slope within 3%") {
    const std::vector<IvPoint> plan = points_at(plan_microamps);
    // Default operating current: the smallest non-zero step, 50 µA (a one-sided window).
    const Computed<ImpedanceFit> at_default = output_impedance(plan);
    REQUIRE(at_default);
    CHECK(at_default->operating_amps == Approx(50e-6));
    CHECK(at_default->degree == 2);
    const double slope50 = ngspice_slope_ohms(50);
    CHECK(at_default->z_out_ohms.value == Approx(slope50).epsilon(0.03));

    ImpedanceOptions options;
    options.operating_amps = 100e-6;
    const Computed<ImpedanceFit> at100 = output_impedance(plan, options);
    REQUIRE(at100);
    const double slope100 = ngspice_slope_ohms(100);
    CHECK(at100->z_out_ohms.value == Approx(slope100).epsilon(0.03));
    // The curve bends: the slope at 50 µA is measurably steeper than at 100 µA.
    CHECK(slope50 > 1.03 * slope100);
  }

  SECTION("fitted R within 10% of the Cockcroft-Walton value") {
    std::vector<double> whole = low_microamps;
    whole.insert(whole.end(), plan_microamps.begin(), plan_microamps.end());
    const std::vector<IvPoint> points = points_at(whole);
    const double cw_ohms = model_source_ohms(3, 1e3, 1e-6);
    REQUIRE(cw_ohms == Approx(22e3));

    const Computed<DiodeCurveFit> fit = fit_diode_curve(points);
    REQUIRE(fit);
    REQUIRE(fit->series_ohms);
    CHECK(fit->series_ohms->value == Approx(cw_ohms).epsilon(0.10));
    REQUIRE(fit->emission_coefficient);
    CHECK(fit->emission_coefficient->value > 0.0);
    // The knee of six diodes with IS = 1 nA lies at nanoamps, far below 5 µA.
    CHECK(fit->model == DiodeCurveModel::no_knee);
    REQUIRE_FALSE(fit->knee_amps);
    CHECK_THAT(fit->knee_amps.reason(), Catch::Contains("not identifiable"));
    REQUIRE_FALSE(fit->v0_volts);

    const Computed<LinearRegionFit> linear = linear_region_fit(points);
    REQUIRE(linear);
    CHECK(linear->source_ohms.value == Approx(cw_ohms).epsilon(0.10));
    CHECK(effective_capacitance_farads(3, 1e3, linear->source_ohms.value) == Approx(1e-6).epsilon(0.10));
  }
}
