#include "bench_config.h"

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <filesystem>

#include "daemon/plan/config_error.h"
#include "daemon/plan/json_reader.h"
#include "drivers/instruments/dialect.h"
#include "drivers/instruments/dialect_error.h"
#include "drivers/transport/address.h"

namespace zout {
namespace {

std::string resolve(const std::filesystem::path& base_dir, const std::string& path) {
  const std::filesystem::path p(path);
  return p.is_absolute() ? p.string() : (base_dir / p).lexically_normal().string();
}

InstrumentConfig read_instrument(JsonReader node, const std::string& role, const std::filesystem::path& base_dir) {
  InstrumentConfig config;
  JsonReader address = node.member("address");
  config.address = address.string();
  try {
    parse_address(config.address);
  } catch (const AddressError& e) {
    address.fail(e.what());
  }
  JsonReader dialect = node.member("dialect");
  config.dialect_path = resolve(base_dir, dialect.string());
  try {
    const Dialect loaded = Dialect::load_file(config.dialect_path);
    if (loaded.role() != role) {
      dialect.fail(fmt::format("{} is a dialect for role {}, not {}", config.dialect_path, loaded.role(), role));
    }
  } catch (const DialectError& e) {
    dialect.fail(e.what());
  }
  if (auto timeout = node.optional_member("timeout_ms")) {
    config.timeout = std::chrono::milliseconds(timeout->integer(1, 600'000));
  }
  node.refuse_unknown_keys();
  return config;
}

}  // namespace

BenchConfig load_bench_file(const std::string& file_path) {
  const nlohmann::json document = JsonReader::parse_file(file_path);
  JsonReader root(document, "bench", file_path);
  const auto base_dir = std::filesystem::path(file_path).parent_path();

  BenchConfig bench;
  bench.file_path = file_path;
  bench.station = root.member("station").name();
  bench.database_path = resolve(base_dir, root.member("database").string());
  JsonReader control = root.member("control");
  bench.control_socket_path = resolve(base_dir, control.member("socket").string());
  control.refuse_unknown_keys();

  JsonReader instruments = root.member("instruments");
  bench.source = read_instrument(instruments.member("source"), "source", base_dir);
  bench.meter = read_instrument(instruments.member("meter"), "meter", base_dir);
  bench.load = read_instrument(instruments.member("load"), "load", base_dir);
  if (auto panel = instruments.optional_member("switch")) {
    bench.panel_switch = read_instrument(*panel, "switch", base_dir);
  }
  instruments.refuse_unknown_keys();

  JsonReader safety = root.member("safety");
  bench.safety.max_output_volts = safety.member("max_output_volts").number(1e-3, 1e6);
  bench.safety.max_load_amps = safety.member("max_load_amps").number(1e-9, 1e3);
  bench.safety.max_source_volts_peak = safety.member("max_source_volts_peak").number(1e-3, 1e4);
  safety.refuse_unknown_keys();
  root.refuse_unknown_keys();
  return bench;
}

}  // namespace zout
