// zout-store-crash-writer DB SEED [MAX_POINTS]: a test helper for the crash test
// (tests/integration/store_crash_test.cpp). Opens DB with StoreWriter like the daemon does
// (marking runs left `running` as interrupted), starts a run, then commits points of six
// readings each as fast as it can, printing "committed POINT_ID" on stdout, flushed, after
// each commit has returned. It expects to be killed; with MAX_POINTS it stops by itself.

#include <fmt/format.h>

#include <chrono>
#include <cstdio>
#include <exception>
#include <random>
#include <string>

#include "daemon/store/store_error.h"
#include "daemon/store/store_writer.h"

using namespace zout::store;

int main(int argc, char** argv) {
  if (argc < 3) {
    std::fprintf(stderr, "usage: zout-store-crash-writer DB SEED [MAX_POINTS]\n");
    return 2;
  }
  try {
    const std::string path = argv[1];
    std::mt19937_64 random(std::stoull(argv[2]));
    const long max_points = argc > 3 ? std::stol(argv[3]) : -1;
    const auto now = [] { return std::chrono::system_clock::now(); };

    StoreWriter writer(path);
    writer.interrupt_running_runs(now());
    const auto station = writer.record_station("crash-bench", now());
    const auto source = writer.record_instrument({station, "source", "tcp://127.0.0.1:5601", "Sim", "FG-1", "S1", "1.0"}, now());
    const auto meter = writer.record_instrument({station, "meter", "tcp://127.0.0.1:5602", "Sim", "DMM-1", "M1", "1.0"}, now());
    const auto load = writer.record_instrument({station, "load", "tcp://127.0.0.1:5603", "Sim", "EL-1", "L1", "1.0"}, now());
    const auto plan = writer.record_plan("crash", R"({"load":{"mode":"current","steps":[0,0.001]}})", now());
    const auto unit = writer.record_unit(fmt::format("CRASH-{}", argv[2]), "CW4", now());
    const auto run = writer.create_run({unit, plan, station, RunKind::soak, RunState::running, now(), "crash-test", ""});

    std::uniform_real_distribution<double> noise(-0.01, 0.01);
    long committed = 0;
    for (int sweep_index = 0;; ++sweep_index) {
      const auto sweep = writer.start_sweep(run, sweep_index, now());
      for (int step = 0; step < 20; ++step) {
        const double amps = 50e-6 * step;
        const double volts = 2000.0 - 1.2e6 * amps + noise(random);
        const auto t = now();
        PointRecord point;
        point.sweep_id = sweep;
        point.step_index = step;
        point.set_load_amps = amps;
        point.measured_load_amps = amps + noise(random) * 1e-6;
        point.dc_volts = volts;
        point.ripple_rms_volts = 0.5 + 1e4 * amps;
        point.ripple_pp_volts = *point.ripple_rms_volts * 3.4641016151377544;
        point.settle_s = 0.25;
        point.step_started_at = t;
        point.taken_at = t;
        const std::vector<ReadingRecord> readings = {
            {meter, "settle_dc_volts", volts + 0.3, t},
            {meter, "settle_dc_volts", volts + 0.01, t},
            {meter, "dc_volts", volts, t},
            {meter, "ac_rms_volts", *point.ripple_rms_volts, t},
            {load, "load_amps", *point.measured_load_amps, t},
            {source, "source_volts", 500.0, t},
        };
        const auto point_id = writer.commit_point(point, readings);
        std::printf("committed %lld\n", static_cast<long long>(point_id));
        std::fflush(stdout);
        if (++committed == max_points) return 0;
      }
      writer.end_sweep(sweep, now());
    }
  } catch (const std::exception& e) {
    std::fprintf(stderr, "zout-store-crash-writer: %s\n", e.what());
    return 1;
  }
}
