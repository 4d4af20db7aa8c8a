// `zout bench`: asks every instrument of a bench file who it is (*IDN?, IEEE 488.2 §10.14),
// directly over its own link, no daemon needed. Each instrument is tried even when another
// fails; with --errors its error queue is read (and thereby emptied) too.
#include <fmt/format.h>

#include <iostream>

#include <nlohmann/json.hpp>

#include "daemon/cli/client_paths.h"
#include "daemon/cli/command_errors.h"
#include "daemon/cli/exit_codes.h"
#include "daemon/cli/history_verbs.h"
#include "daemon/cli/text_table.h"
#include "daemon/plan/bench_config.h"
#include "drivers/scpi/session.h"
#include "drivers/transport/address.h"
#include "drivers/transport/io_error.h"
#include "drivers/transport/transport_factory.h"

namespace zout::cli {
namespace {

using nlohmann::json;

struct BenchOptions {
  ClientPaths paths;
  bool read_errors = false;
  bool json_output = false;
};

int run_bench(const BenchOptions& o) {
  const std::string bench_path = o.paths.bench_file();
  const BenchConfig bench = load_bench_file(bench_path);
  std::vector<std::pair<std::string, InstrumentConfig>> instruments = {
      {"source", bench.source}, {"meter", bench.meter}, {"load", bench.load}};
  if (bench.panel_switch) instruments.emplace_back("switch", *bench.panel_switch);

  json rows = json::array();
  TextTable table({"ROLE", "ADDRESS", "MANUFACTURER", "MODEL", "SERIAL", "FIRMWARE", "STATUS"});
  int code = exit_ok;
  for (const auto& [role, instrument] : instruments) {
    json row = {{"role", role}, {"address", instrument.address}};
    try {
      Session session(make_transport(parse_address(instrument.address)), instrument.timeout);
      const Identity id = session.identify();
      row["manufacturer"] = id.manufacturer;
      row["model"] = id.model;
      row["serial_number"] = id.serial_number;
      row["firmware"] = id.firmware;
      std::string status = "answered";
      if (o.read_errors) {
        json errors = json::array();
        for (const auto& entry : session.drain_errors()) errors.push_back(fmt::format("{},\"{}\"", entry.code, entry.message));
        row["errors"] = errors;
        status = errors.empty() ? "answered, error queue empty" : fmt::format("answered, {} error(s): {}",
                                                                              errors.size(), errors[0].get<std::string>());
      }
      row["status"] = status;
    } catch (const IoError& e) {
      row["status"] = std::string(e.what());
      // A link that could not be used at all outranks one that was only slow.
      code = e.kind() == IoErrorKind::timeout && code != exit_link ? exit_timeout : exit_link;
    } catch (const std::exception& e) {
      row["status"] = std::string(e.what());
      code = exit_link;
    }
    table.add_row({role, instrument.address, row.value("manufacturer", ""), row.value("model", ""),
                   row.value("serial_number", ""), row.value("firmware", ""), row.value("status", "")});
    rows.push_back(row);
  }
  if (o.json_output) {
    std::cout << json{{"bench_file", bench_path}, {"station", bench.station}, {"instruments", rows}}.dump(2) << "\n";
  } else {
    std::cout << fmt::format("bench {} (station {})\n", bench_path, bench.station) << table.render();
  }
  return code;
}

}  // namespace

void add_bench_command(CLI::App& app, int& exit_code) {
  auto o = std::make_shared<BenchOptions>();
  auto* verb = app.add_subcommand("bench", "Identify every instrument of a bench file directly (no daemon needed)");
  verb->add_flag("--errors", o->read_errors, "Also read each instrument's error queue (this empties it)");
  verb->add_flag("--json", o->json_output, "Print one JSON object");
  o->paths.add_options(*verb, false, false);
  verb->footer(
      "While zoutd holds the bench, serial instruments report busy: stop it first or use zout status.\n"
      "Exit status: 0 every instrument answered, 3 one timed out, 4 one could not be reached,\n"
      "7 the bench file is refused.\nExample: zout bench --bench /etc/zout/bench.json");
  verb->callback(verb_callback("bench", exit_code, [o] { return run_bench(*o); }));
}

}  // namespace zout::cli
