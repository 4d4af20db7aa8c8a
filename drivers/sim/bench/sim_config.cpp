#include "sim_config.h"

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <fstream>
#include <set>
#include <system_error>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

namespace zout::sim {

namespace {

using nlohmann::json;

constexpr UnitFault all_faults[] = {UnitFault::none, UnitFault::weak_capacitor, UnitFault::leaky_diode,
                                    UnitFault::leaky_capacitor};

// Reports problems with their JSON path.
class Checker {
 public:
  explicit Checker(std::string origin) : origin_(std::move(origin)) {}

  [[noreturn]] void fail(const std::string& path, const std::string& rule) const {
    if (path.empty()) throw SimConfigError(fmt::format("{}: {}", origin_, rule));
    throw SimConfigError(fmt::format("{}: {}: {}", origin_, path, rule));
  }

  void only_keys(const json& object, const std::string& path, std::initializer_list<const char*> allowed) const {
    if (!object.is_object()) fail(path, "must be a JSON object");
    for (const auto& item : object.items()) {
      bool known = false;
      for (const char* key : allowed) known = known || item.key() == key;
      if (!known) {
        std::string names;
        for (const char* key : allowed) names += (names.empty() ? "" : ", ") + std::string(key);
        fail(join(path, item.key()), "unknown key; allowed: " + names);
      }
    }
  }

  // A finite number with `lowest < value` (or <=) and `value <= highest`.
  double number(const json& object, const std::string& path, const char* key, double lowest, bool lowest_included,
                double highest) const {
    const std::string where = join(path, key);
    if (!object.contains(key)) fail(where, "is missing");
    const json& value = object.at(key);
    if (!value.is_number()) fail(where, fmt::format("must be a number, got {}", value.dump()));
    const double x = value.get<double>();
    const bool low_ok = lowest_included ? x >= lowest : x > lowest;
    if (!std::isfinite(x) || !low_ok || x > highest) {
      fail(where, fmt::format("must be a number {} {:g} and <= {:g}, got {}", lowest_included ? ">=" : ">", lowest,
                              highest, value.dump()));
    }
    return x;
  }

  double optional_number(const json& object, const std::string& path, const char* key, double fallback, double lowest,
                         bool lowest_included, double highest) const {
    if (!object.contains(key)) return fallback;
    return number(object, path, key, lowest, lowest_included, highest);
  }

  long long integer(const json& object, const std::string& path, const char* key, long long lowest,
                    long long highest) const {
    const std::string where = join(path, key);
    if (!object.contains(key)) fail(where, "is missing");
    const json& value = object.at(key);
    if (!value.is_number_integer() || value.get<long long>() < lowest || value.get<long long>() > highest) {
      fail(where, fmt::format("must be a whole number from {} to {}, got {}", lowest, highest, value.dump()));
    }
    return value.get<long long>();
  }

  std::string string(const json& object, const std::string& path, const char* key) const {
    const std::string where = join(path, key);
    if (!object.contains(key)) fail(where, "is missing");
    if (!object.at(key).is_string()) fail(where, fmt::format("must be a string, got {}", object.at(key).dump()));
    return object.at(key).get<std::string>();
  }

  static std::string join(const std::string& path, const std::string& key) {
    return path.empty() ? key : path + "." + key;
  }

 private:
  std::string origin_;
};

constexpr double huge = 1e300;

}  // namespace

const char* to_string(UnitFault fault) {
  switch (fault) {
    case UnitFault::none: return "none";
    case UnitFault::weak_capacitor: return "weak_capacitor";
    case UnitFault::leaky_diode: return "leaky_diode";
    case UnitFault::leaky_capacitor: return "leaky_capacitor";
  }
  return "?";
}

std::optional<UnitFault> unit_fault_named(std::string_view name) {
  for (auto fault : all_faults) {
    if (name == to_string(fault)) return fault;
  }
  return std::nullopt;
}

std::string unit_fault_names() {
  std::string out;
  for (auto fault : all_faults) out += (out.empty() ? "" : ", ") + std::string(to_string(fault));
  return out;
}

std::string serial_number_problem(std::string_view serial) {
  if (serial.empty()) return "must not be empty";
  if (serial.size() > 40) return fmt::format("must be at most 40 characters, got {}", serial.size());
  for (char c : serial) {
    const auto byte = static_cast<unsigned char>(c);
    if (byte <= 0x20 || byte >= 0x7f || c == ',' || c == ';' || c == '"') {
      return fmt::format("character 0x{:02X} not allowed (printable ASCII without white space, ',', ';' or '\"')",
                         byte);
    }
  }
  return {};
}

int SimConfig::slot_count() const {
  int count = 0;
  for (const auto& entry : panel) count = std::max(count, entry.slot);
  return count;
}

SimConfig SimConfig::load_file(const std::string& path) {
  std::ifstream in(path);
  if (!in) {
    const auto reason = std::error_code(errno, std::generic_category()).message();
    throw SimConfigError(fmt::format("{}: cannot open sim config ({})", path, reason));
  }
  json document;
  try {
    document = json::parse(in);
  } catch (const json::parse_error& e) {
    throw SimConfigError(fmt::format("{}: not valid JSON: {}", path, e.what()));
  }
  return from_json(document, path);
}

SimConfig SimConfig::from_json(const json& document, const std::string& origin) {
  const Checker check(origin);
  if (!document.is_object()) check.fail("", "a sim config must be a JSON object with \"dut\" and \"panel\"");
  check.only_keys(document, "", {"description", "dut", "source", "meter", "panel", "seed"});

  SimConfig config;
  config.origin = origin;
  if (document.contains("description")) config.description = check.string(document, "", "description");
  if (document.contains("seed")) {
    config.seed = static_cast<std::uint64_t>(check.integer(document, "", "seed", 0, 9007199254740991LL));
  }

  if (!document.contains("dut")) check.fail("dut", "is missing");
  const json& dut = document.at("dut");
  check.only_keys(dut, "dut", {"stages", "capacitance_farads", "capacitor_tolerance", "diode", "filter"});
  config.dut.stages = static_cast<int>(check.integer(dut, "dut", "stages", 1, 40));
  config.dut.capacitance_farads = check.number(dut, "dut", "capacitance_farads", 0.0, false, 1.0);
  config.dut.capacitor_tolerance = check.optional_number(dut, "dut", "capacitor_tolerance", 0.0, 0.0, true, 0.5);
  if (dut.contains("diode")) {
    const json& diode = dut.at("diode");
    check.only_keys(diode, "dut.diode", {"saturation_current_amps", "emission_coefficient", "series_ohms"});
    auto& d = config.dut.diode;
    d.saturation_current_amps =
        check.optional_number(diode, "dut.diode", "saturation_current_amps", d.saturation_current_amps, 0.0, false, 1e-3);
    d.emission_coefficient =
        check.optional_number(diode, "dut.diode", "emission_coefficient", d.emission_coefficient, 0.5, true, 5.0);
    d.series_ohms = check.optional_number(diode, "dut.diode", "series_ohms", d.series_ohms, 0.0, true, 1e6);
  }
  if (dut.contains("filter")) {
    const json& filter = dut.at("filter");
    check.only_keys(filter, "dut.filter", {"series_ohms", "capacitance_farads"});
    FilterConfig f;
    f.series_ohms = check.number(filter, "dut.filter", "series_ohms", 0.0, false, 1e9);
    f.capacitance_farads = check.number(filter, "dut.filter", "capacitance_farads", 0.0, false, 1.0);
    config.dut.filter = f;
  }

  if (document.contains("source")) {
    const json& source = document.at("source");
    check.only_keys(source, "source", {"output_ohms"});
    config.source_output_ohms = check.optional_number(source, "source", "output_ohms", 50.0, 0.0, false, 1e6);
  }

  if (document.contains("meter")) {
    const json& meter = document.at("meter");
    check.only_keys(meter, "meter", {"input_ohms", "range_volts", "noise_volts", "line_frequency_hz"});
    auto& m = config.meter;
    m.input_ohms = check.optional_number(meter, "meter", "input_ohms", m.input_ohms, 0.0, false, huge);
    m.range_volts = check.optional_number(meter, "meter", "range_volts", m.range_volts, 0.0, false, 1e6);
    m.noise_volts = check.optional_number(meter, "meter", "noise_volts", m.noise_volts, 0.0, true, 1e3);
    m.line_frequency_hz = check.optional_number(meter, "meter", "line_frequency_hz", m.line_frequency_hz, 0.0, false, 1e3);
    if (m.line_frequency_hz != 50.0 && m.line_frequency_hz != 60.0) {
      check.fail("meter.line_frequency_hz", fmt::format("must be 50 or 60 (mains), got {:g}", m.line_frequency_hz));
    }
  }

  if (!document.contains("panel")) check.fail("panel", "is missing (a list of {\"slot\", \"serial\"} entries)");
  const json& panel = document.at("panel");
  if (!panel.is_array() || panel.empty()) check.fail("panel", "must be a non-empty list of {\"slot\", \"serial\"}");
  std::set<int> slots;
  std::set<std::string> serials;
  for (std::size_t i = 0; i < panel.size(); ++i) {
    const std::string path = fmt::format("panel[{}]", i);
    const json& item = panel[i];
    check.only_keys(item, path, {"slot", "serial", "fault"});
    PanelEntry entry;
    entry.slot = static_cast<int>(check.integer(item, path, "slot", 1, 64));
    if (!slots.insert(entry.slot).second) check.fail(path + ".slot", fmt::format("slot {} is listed twice", entry.slot));
    entry.serial = check.string(item, path, "serial");
    if (const auto problem = serial_number_problem(entry.serial); !problem.empty()) check.fail(path + ".serial", problem);
    if (!serials.insert(entry.serial).second) {
      check.fail(path + ".serial", fmt::format("serial {} is listed twice", entry.serial));
    }
    if (item.contains("fault")) {
      const std::string name = check.string(item, path, "fault");
      const auto fault = unit_fault_named(name);
      if (!fault) check.fail(path + ".fault", fmt::format("unknown fault \"{}\"; allowed: {}", name, unit_fault_names()));
      entry.fault = *fault;
    }
    config.panel.push_back(std::move(entry));
  }
  std::sort(config.panel.begin(), config.panel.end(),
            [](const PanelEntry& a, const PanelEntry& b) { return a.slot < b.slot; });
  return config;
}

}  // namespace zout::sim
