// scripts/demo --short from start to finish (what the README promises a newcomer): it builds
// nothing new here (the build is current), starts zout-sim and zoutd, runs the production plan
// on two boards of the demo panel, prints the results, writes plots, runs the short soak, and
// stops everything it started. Registered as its own ctest test with a longer timeout.
#include <catch2/catch.hpp>

#include <signal.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>

#include "tests/support/child_process.h"

using namespace zout::test;
using namespace std::chrono_literals;
using Catch::Contains;

TEST_CASE("scripts/demo --short runs the main job end to end and cleans up", "[demo]") {
  const auto dir = std::filesystem::temp_directory_path() / ("zout-demo-test-" + std::to_string(::getpid()));
  std::filesystem::remove_all(dir);
  const std::string script = std::string(ZOUT_SOURCE_DIR) + "/scripts/demo";
  const auto r = run_child({"/usr/bin/env", "BUILD_DIR=" + std::string(ZOUT_BUILD_DIR), "DEMO_DIR=" + (dir / "demo").string(),
                            "OUT_DIR=" + (dir / "out").string(), script, "--short"},
                           420s);
  INFO(r.out << "\n--- stderr ---\n" << r.err);
  REQUIRE_FALSE(r.timed_out);
  REQUIRE(r.exit_code == 0);
  // Results table: the good board passes, the weak-capacitor board fails (invented demo panel).
  CHECK_THAT(r.out, Contains("BB5-2611-0001") && Contains("BB5-2611-0004"));
  CHECK_THAT(r.out, Contains("run 1 BB5-2611-0001: passed"));
  CHECK_THAT(r.out, Contains("run 2 BB5-2611-0004: failed"));
  CHECK_THAT(r.out, Contains("effective C ") && Contains(" nF < 21.5 nF min"));
  // Live progress lines and the soak's drift figures.
  CHECK_THAT(r.out, Contains("sweep 1/1 step 11/11"));
  CHECK_THAT(r.out, Contains("sweep 4/4"));
  CHECK_THAT(r.out, Contains("V/h"));
  CHECK_THAT(r.out, Contains("Try:"));
  // Plots of every run, non-empty.
  for (const char* file : {"run-1-iv.svg", "run-1-iv.png", "run-2-ripple.svg", "run-3-soak.svg"}) {
    INFO(file);
    REQUIRE(std::filesystem::exists(dir / "out" / file));
    CHECK(std::filesystem::file_size(dir / "out" / file) > 1000);
  }
  // Everything it started has stopped: the pids it ran are gone.
  CHECK(std::filesystem::exists(dir / "demo" / "zout.db"));
  std::ifstream log(dir / "demo" / "zoutd.log");
  const std::string zoutd_log((std::istreambuf_iterator<char>(log)), std::istreambuf_iterator<char>());
  CHECK_THAT(zoutd_log, Contains("bench in safe state"));
  std::filesystem::remove_all(dir);
}
