#include "unit_list.h"

#include <fmt/format.h>

#include <algorithm>
#include <set>
#include <stdexcept>

#include "daemon/plan/json_reader.h"

namespace zout::cli {

UnitOnBench parse_unit_argument(const std::string& text) {
  UnitOnBench unit;
  const auto at = text.rfind('@');
  unit.serial = at == std::string::npos ? text : text.substr(0, at);
  if (unit.serial.empty()) {
    throw std::invalid_argument(fmt::format("--unit \"{}\": the serial number is empty; write SERIAL or SERIAL@SLOT", text));
  }
  if (at != std::string::npos) {
    const std::string slot = text.substr(at + 1);
    const bool digits = !slot.empty() && slot.size() <= 5 && std::all_of(slot.begin(), slot.end(), [](char c) {
      return c >= '0' && c <= '9';
    });
    if (!digits || std::stoi(slot) < 1) {
      throw std::invalid_argument(
          fmt::format("--unit \"{}\": slot \"{}\" is not a whole number >= 1; write SERIAL or SERIAL@SLOT", text, slot));
    }
    unit.slot = std::stoi(slot);
  }
  return unit;
}

std::vector<UnitOnBench> load_panel_file(const std::string& path) {
  const nlohmann::json document = JsonReader::parse_file(path);  // the reader keeps a reference
  JsonReader root(document, "panel_file", path);
  std::vector<UnitOnBench> units;
  std::set<long long> slots;
  std::set<std::string> serials;
  for (JsonReader entry : root.member("panel").elements(1, 10'000)) {
    UnitOnBench unit;
    const long long slot = entry.member("slot").integer(1, 10'000);
    unit.slot = static_cast<int>(slot);
    unit.serial = entry.member("serial").name();
    entry.refuse_unknown_keys();
    if (!slots.insert(slot).second) entry.member("slot").fail(fmt::format("slot {} appears twice", slot));
    if (!serials.insert(unit.serial).second) {
      entry.member("serial").fail(fmt::format("\"{}\" appears twice", unit.serial));
    }
    units.push_back(unit);
  }
  root.refuse_unknown_keys();
  std::sort(units.begin(), units.end(), [](const UnitOnBench& a, const UnitOnBench& b) { return *a.slot < *b.slot; });
  return units;
}

nlohmann::json units_json(const std::vector<UnitOnBench>& units) {
  nlohmann::json out = nlohmann::json::array();
  for (const auto& unit : units) {
    nlohmann::json entry = {{"serial", unit.serial}};
    if (unit.slot) entry["slot"] = *unit.slot;
    out.push_back(entry);
  }
  return out;
}

}  // namespace zout::cli
