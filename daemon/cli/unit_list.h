#pragma once
// The units a `zout start` names: `--unit SERIAL[@SLOT]` (repeatable) or `--panel FILE`, a
// JSON file describing what sits on the panel:
//   {"panel": [{"slot": 1, "serial": "BB5-2611-0001"}, {"slot": 2, "serial": "BB5-2611-0002"}]}
// Empty slots are simply left out. Errors name the argument or the file and JSON path.

#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

namespace zout::cli {

struct UnitOnBench {
  std::string serial;
  std::optional<int> slot;
};

// "SERIAL" or "SERIAL@SLOT" (SLOT a whole number >= 1). std::invalid_argument naming the text.
UnitOnBench parse_unit_argument(const std::string& text);

// Every unit of a panel file, in slot order. Throws ConfigError (file, JSON path, rule) for an
// unreadable or malformed file, a duplicate slot or serial, or an empty panel.
std::vector<UnitOnBench> load_panel_file(const std::string& path);

// As run.start's "units" parameter.
nlohmann::json units_json(const std::vector<UnitOnBench>& units);

}  // namespace zout::cli
