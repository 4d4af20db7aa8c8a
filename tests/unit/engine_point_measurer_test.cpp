// PointMeasurer through the in-memory FakeBench: settling, DC samples, ripple at the steps the
// plan asks for, the load's readbacks, the safety trip, I/O faults and abort. No timing
// beyond the fake's own readings: each test takes milliseconds.
#include <catch2/catch.hpp>

#include <algorithm>
#include <atomic>
#include <cmath>

#include "daemon/engine/engine_errors.h"
#include "daemon/engine/point_measurer.h"
#include "daemon/plan/plan.h"
#include "drivers/transport/io_error.h"
#include "tests/support/fake_bench.h"

using namespace zout;
using zout::test::FakeBench;
using zout::test::FakeFault;
using zout::test::fast_plan_json;

namespace {

SafetyLimits safety() {
  SafetyLimits limits;
  limits.max_output_volts = 500.0;
  limits.max_load_amps = 0.01;
  limits.max_source_volts_peak = 100.0;
  return limits;
}

// The bench as RunExecutor leaves it before a point: drive on, load on at `amps`.
void drive(FakeBench& fake, double amps) {
  fake.set_output(true);
  fake.select_mode(LoadMode::constant_current);
  fake.set_current_amps(amps);
  fake.set_input(true);
}

std::vector<std::string> kinds(const MeasuredPoint& p) {
  std::vector<std::string> out;
  for (const auto& r : p.readings) out.push_back(r.kind);
  return out;
}

long count_of(const std::vector<std::string>& v, const std::string& what) { return std::count(v.begin(), v.end(), what); }

struct Rig {
  explicit Rig(FakeBench::Unit unit = FakeBench::Unit(), nlohmann::json plan_json = fast_plan_json())
      : fake(false, unit), plan(parse_plan(plan_json, "test plan")), limits(safety()),
        measurer(fake, plan, limits, [this] { return abort.load(); }) {}

  MeasuredPoint measure(int step) {
    return measurer.measure(step, std::chrono::steady_clock::now(), std::chrono::system_clock::now());
  }

  FakeBench fake;
  Plan plan;
  SafetyLimits limits;
  std::atomic<bool> abort{false};
  PointMeasurer measurer;
};

// The message of the SafetyTrip that measuring `step` throws ("" when it throws none).
std::string trip_message(Rig& rig, int step) {
  try {
    rig.measure(step);
  } catch (const SafetyTrip& e) {
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("PointMeasurer settles on an exponential approach and averages the DC samples", "[engine]") {
  FakeBench::Unit unit;
  unit.approach = 0.5;  // each reading halves the distance to v_oc − R·I
  Rig rig(unit);
  drive(rig.fake, 1e-4);
  const MeasuredPoint p = rig.measure(1);

  const double settled_volts = 380.0 - 200e3 * 1e-4;  // 360 V
  REQUIRE(p.step_index == 1);
  REQUIRE(p.settled);
  // Two readings within 0.01 V of each other: the remaining gap is then below 0.01 V as well.
  REQUIRE(p.dc_volts == Approx(settled_volts).margin(0.01));
  const auto k = kinds(p);
  // From 0 V halving: 180, 270, ... ; the window needs > 15 readings to close within 0.01 V.
  REQUIRE(count_of(k, "settle_dc_volts") > 15);
  REQUIRE(count_of(k, "dc_volts") == 2);  // measure.dc.samples
  REQUIRE(count_of(k, "ac_rms_volts") == 0);  // ripple only at the rated step (index 3)
  REQUIRE(p.load_amps == Approx(1e-4));
  REQUIRE(p.load_volts == Approx(settled_volts).margin(0.01));
  REQUIRE_FALSE(p.ripple_rms_volts.has_value());
  REQUIRE(std::is_sorted(p.readings.begin(), p.readings.end(),
                         [](const RawReading& a, const RawReading& b) { return a.taken_at < b.taken_at; }));
  // The meter was put on DC volts with the plan's range and NPLC before the first reading.
  const auto commands = rig.fake.commands();
  const auto dc = std::find(commands.begin(), commands.end(), "meter.configure_dc_volts 1000 1");
  const auto first_read = std::find(commands.begin(), commands.end(), "meter.read_one");
  REQUIRE(dc < first_read);
}

TEST_CASE("PointMeasurer reads ripple at the rated step only and returns the meter to DC after", "[engine]") {
  Rig rig;
  drive(rig.fake, 4e-4);
  const MeasuredPoint rated = rig.measure(3);
  // The fake's AC reading is 100 V/A × 0.4 mA = 40 mV RMS; the sawtooth estimate is 2√3·RMS
  // (peak-to-peak of a sawtooth of that RMS; common practice).
  REQUIRE(rated.ripple_rms_volts.value() == Approx(0.04));
  REQUIRE(rated.ripple_pp_volts.value() == Approx(2.0 * std::sqrt(3.0) * 0.04));
  REQUIRE(rig.fake.calls("meter.configure_ac_volts") == 1);

  rig.fake.set_current_amps(0.0);
  const MeasuredPoint open = rig.measure(0);
  REQUIRE_FALSE(open.ripple_rms_volts.has_value());
  REQUIRE(open.dc_volts == Approx(380.0));
  // Back on DC for the next point's settling: configured twice in all (first point, after AC).
  REQUIRE(rig.fake.calls("meter.configure_dc_volts") == 2);
  const auto commands = rig.fake.commands();
  const auto ac = std::find(commands.begin(), commands.end(), "meter.configure_ac_volts 10");
  REQUIRE(std::find(ac, commands.end(), "meter.configure_dc_volts 1000 1") != commands.end());
}

TEST_CASE("PointMeasurer keeps no ripple when the AC reading is an overload", "[engine]") {
  Rig rig;
  drive(rig.fake, 4e-4);
  // The AC reading is the last read_one of the point: settling takes two, so it is the third.
  rig.fake.inject("meter.read_one", FakeFault::overload, 3);
  const MeasuredPoint p = rig.measure(3);
  REQUIRE_FALSE(p.ripple_rms_volts.has_value());
  REQUIRE_FALSE(p.ripple_pp_volts.has_value());
  REQUIRE(p.dc_volts == Approx(300.0));
}

TEST_CASE("PointMeasurer trips on an overload or a reading above safety.max_output_volts", "[engine]") {
  Rig rig;
  drive(rig.fake, 0.0);
  SECTION("overload while settling") {
    rig.fake.inject("meter.read_one", FakeFault::overload, 1);
    REQUIRE_THAT(trip_message(rig, 0), Catch::Contains("overload"));
  }
  SECTION("overload in the DC samples") {
    rig.fake.inject("meter.read_many", FakeFault::overload, 1);
    REQUIRE_THAT(trip_message(rig, 0), Catch::Contains("dc reading is overload"));
  }
  SECTION("a DC sample above the maximum") {
    rig.fake.inject_reading("meter.read_many", 501.0, 1);
    REQUIRE_THAT(trip_message(rig, 0), Catch::Contains("501 V is above safety.max_output_volts 500 V"));
  }
  SECTION("a negative settling reading beyond the maximum") {
    rig.fake.inject_reading("meter.read_one", -600.0, 1);
    REQUIRE_THAT(trip_message(rig, 0), Catch::Contains("-600 V is above"));
  }
  SECTION("the load's own voltage reading above the maximum") {
    rig.fake.inject_reading("load.measure_voltage_volts", 650.0, 1);
    REQUIRE_THAT(trip_message(rig, 0), Catch::Contains("load: voltage reading 650 V"));
  }
  SECTION("exactly at the maximum is no trip") {
    rig.fake.inject_reading("meter.read_many", 500.0, 1);
    REQUIRE(rig.measure(0).dc_volts == 500.0);
  }
}

TEST_CASE("PointMeasurer passes meter and load I/O faults on as IoError, the load link idle again", "[engine]") {
  Rig rig;
  drive(rig.fake, 2e-4);
  SECTION("a drop while settling") {
    rig.fake.inject("meter.read_one", FakeFault::drop, 1);
    try {
      rig.measure(2);
      FAIL("no IoError");
    } catch (const IoError& e) {
      REQUIRE(e.kind() == IoErrorKind::disconnected);
    }
  }
  SECTION("a stall in the DC samples: the load's readback, running beside it, has finished") {
    rig.fake.inject("meter.read_many", FakeFault::stall, 1);
    try {
      rig.measure(2);
      FAIL("no IoError");
    } catch (const IoError& e) {
      REQUIRE(e.kind() == IoErrorKind::timeout);
    }
    // Both readbacks ran to the end before measure() returned.
    REQUIRE(rig.fake.calls("load.measure_voltage_volts") == 1);
  }
  SECTION("a stall of the load's current readback (on its own thread)") {
    rig.fake.inject("load.measure_current_amps", FakeFault::stall, 1);
    try {
      rig.measure(2);
      FAIL("no IoError");
    } catch (const IoError& e) {
      REQUIRE(e.kind() == IoErrorKind::timeout);
    }
  }
  // After any of them the next point measures normally.
  REQUIRE(rig.measure(2).dc_volts == Approx(340.0));
}

TEST_CASE("PointMeasurer stops with RunAborted between readings", "[engine]") {
  Rig rig;
  drive(rig.fake, 4e-4);
  SECTION("before settling") {
    rig.abort = true;
    REQUIRE_THROWS_AS(rig.measure(3), RunAborted);
    REQUIRE(rig.fake.calls("meter.read_one") == 0);
  }
  SECTION("during settling") {
    rig.fake.before("meter.read_one", 1, [&] { rig.abort = true; });
    REQUIRE_THROWS_AS(rig.measure(3), RunAborted);
    REQUIRE(rig.fake.calls("meter.read_one") == 1);
  }
  SECTION("before the ripple reading") {
    rig.fake.before("meter.read_many", 1, [&] { rig.abort = true; });
    REQUIRE_THROWS_AS(rig.measure(3), RunAborted);
    REQUIRE(rig.fake.calls("meter.configure_ac_volts") == 0);
  }
}

TEST_CASE("PointMeasurer marks a point that did not settle within max_s and keeps it", "[engine]") {
  FakeBench::Unit unit;
  unit.approach = 1e-4;  // each reading moves ~38 mV: never two within 1 nV in a 10 ms max_s
  nlohmann::json plan = fast_plan_json();
  plan["settle"]["max_s"] = 0.01;
  plan["settle"]["tolerance_volts"] = 1e-9;
  Rig rig(unit, plan);
  drive(rig.fake, 0.0);
  const MeasuredPoint p = rig.measure(0);
  REQUIRE_FALSE(p.settled);
  REQUIRE(p.settle_s >= 0.01);
  REQUIRE(p.dc_volts < 379.0);  // still on its way to 380 V
}
