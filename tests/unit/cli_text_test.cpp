// The unit arguments and panel files of `zout start`. (Numbers and times for people are
// daemon/text's: tests/unit/text_test.cpp.)
#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>
#include <fstream>

#include "daemon/cli/unit_list.h"
#include "daemon/plan/config_error.h"

using namespace zout;
using namespace zout::cli;
using Catch::Contains;

TEST_CASE("a unit argument is SERIAL or SERIAL@SLOT, mistakes are named", "[cli-text]") {
  CHECK(parse_unit_argument("BB5-2611-0001").serial == "BB5-2611-0001");
  CHECK_FALSE(parse_unit_argument("BB5-2611-0001").slot.has_value());
  const auto on_panel = parse_unit_argument("BB5-2611-0001@7");
  CHECK(on_panel.serial == "BB5-2611-0001");
  CHECK(on_panel.slot == std::optional<int>(7));
  // The last '@' separates the slot, so a serial may hold one.
  CHECK(parse_unit_argument("lot@3@2").serial == "lot@3");
  CHECK_THROWS_WITH(parse_unit_argument("@2"), Contains("the serial number is empty"));
  CHECK_THROWS_WITH(parse_unit_argument("X@0"), Contains("slot \"0\" is not a whole number >= 1"));
  CHECK_THROWS_WITH(parse_unit_argument("X@"), Contains("slot \"\" is not a whole number"));
  CHECK_THROWS_WITH(parse_unit_argument("X@1.5"), Contains("slot \"1.5\""));
}

TEST_CASE("a panel file lists units in slot order, mistakes name the file and JSON path", "[cli-text]") {
  const auto dir = std::filesystem::temp_directory_path() / ("zout-cli-text-" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  const auto write = [&](const std::string& name, const std::string& text) {
    std::ofstream((dir / name).string()) << text;
    return (dir / name).string();
  };
  const auto units = load_panel_file(write("p.json", R"({"panel": [{"slot": 3, "serial": "C"}, {"slot": 1, "serial": "A"}]})"));
  REQUIRE(units.size() == 2);
  CHECK(units[0].serial == "A");
  CHECK(units[0].slot == std::optional<int>(1));
  CHECK(units[1].serial == "C");
  CHECK(units_json(units).dump() == R"([{"serial":"A","slot":1},{"serial":"C","slot":3}])");

  const auto bad_serial = write("dup.json", R"({"panel": [{"slot": 1, "serial": "A"}, {"slot": 2, "serial": "A"}]})");
  CHECK_THROWS_WITH(load_panel_file(bad_serial), Contains("dup.json") && Contains("panel[1].serial") &&
                                                     Contains("\"A\" appears twice"));
  CHECK_THROWS_AS(load_panel_file(write("empty.json", R"({"panel": []})")), ConfigError);
  CHECK_THROWS_WITH(load_panel_file(write("typo.json", R"({"panel": [{"slot": 1, "serail": "A"}]})")),
                    Contains("typo.json"));
  CHECK_THROWS_WITH(load_panel_file(write("extra.json", R"({"panel": [{"slot": 1, "serial": "A", "fault": "x"}]})")),
                    Contains("panel[0].fault: unknown key"));
  std::filesystem::remove_all(dir);
}
