// `cmake --install` into a temporary prefix: the programs, the bench file, dialects, plans,
// schema and systemd unit land where the README says, with this prefix's paths filled in, and
// the installed client accepts the installed plan on the installed bench.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <sstream>

#include "tests/support/child_process.h"
#include "tests/support/temp_dir.h"

using namespace zout::test;
using namespace std::chrono_literals;
using Catch::Contains;

TEST_CASE("cmake --install puts programs, config, schema and the systemd unit in place", "[install]") {
  const auto prefix = std::filesystem::temp_directory_path() / ("zout-install-test-" + std::to_string(::getpid()));
  std::filesystem::remove_all(prefix);
  const auto installed = run_child({ZOUT_CMAKE_COMMAND, "--install", ZOUT_BUILD_DIR, "--prefix", prefix.string()}, 120s);
  INFO(installed.out << installed.err);
  REQUIRE(installed.exit_code == 0);

  for (const char* file : {"bin/zout", "bin/zoutd", "bin/zout-sim", "etc/zout/bench.json",
                           "etc/zout/dialects/scpi-meter.json", "etc/zout/dialects/scpi-switch.json",
                           "share/zout/plans/bias-board-production.json", "share/zout/plans/bias-board-soak.json",
                           "share/zout/panels/bb5-demo-panel.json", "share/zout/sim/demo.json",
                           "share/zout/schema/001_tables.sql", "share/zout/schema/003_views.sql",
                           "lib/systemd/system/zoutd.service"}) {
    INFO(file);
    CHECK(std::filesystem::is_regular_file(prefix / file));
  }
  const std::string unit = file_bytes(prefix / "lib/systemd/system/zoutd.service");
  CHECK_THAT(unit, Contains("ExecStart=" + (prefix / "bin/zoutd").string() + " --bench " +
                            (prefix / "etc/zout/bench.json").string() + " --foreground"));
  CHECK_THAT(unit, Contains("StateDirectory=zout"));
  const std::string bench = file_bytes(prefix / "etc/zout/bench.json");
  CHECK_THAT(bench, Contains("\"database\": \"/var/lib/zout/zout.db\""));
  CHECK_THAT(bench, Contains("\"socket\": \"/run/zout/zoutd.sock\""));

  // The installed client accepts the installed production plan on the installed bench.
  const auto check = run_child({(prefix / "bin/zout").string(), "check",
                                (prefix / "share/zout/plans/bias-board-production.json").string(), "--bench",
                                (prefix / "etc/zout/bench.json").string()},
                               30s);
  INFO(check.err);
  CHECK(check.exit_code == 0);
  CHECK_THAT(check.out, Contains("safety: within the bench's maxima"));

  // A station's edited bench file survives a reinstall.
  std::ofstream(prefix / "etc/zout/bench.json", std::ios::app) << "\n";
  const std::string edited = file_bytes(prefix / "etc/zout/bench.json");
  REQUIRE(run_child({ZOUT_CMAKE_COMMAND, "--install", ZOUT_BUILD_DIR, "--prefix", prefix.string()}, 120s).exit_code == 0);
  CHECK(file_bytes(prefix / "etc/zout/bench.json") == edited);
  std::filesystem::remove_all(prefix);
}
