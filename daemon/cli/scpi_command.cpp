#include "scpi_command.h"

#include <fmt/format.h>

#include <chrono>
#include <iostream>
#include <memory>

#include "daemon/cli/exit_codes.h"
#include "drivers/scpi/instrument_error.h"
#include "drivers/scpi/session.h"
#include "drivers/transport/address.h"
#include "drivers/transport/io_error.h"
#include "drivers/transport/transport_factory.h"

namespace zout::cli {
namespace {

struct ScpiOptions {
  std::string address;
  std::vector<std::string> commands;
  int timeout_ms = 2000;
  bool check_errors = false;
};

int run_scpi(const ScpiOptions& options) {
  Address address;
  try {
    address = parse_address(options.address);
  } catch (const AddressError& e) {
    std::cerr << "zout scpi: " << e.what() << "\n";
    return exit_usage;
  }
  Session session(make_transport(address), std::chrono::milliseconds(options.timeout_ms));
  try {
    for (const auto& command : options.commands) {
      if (is_query(command)) {
        std::cout << session.query(command) << std::endl;
      } else {
        session.write(command);
      }
    }
    if (options.check_errors) session.check_errors();
  } catch (const IoError& e) {
    std::cerr << "zout scpi: " << to_string(e.kind()) << ": " << e.what() << "\n";
    return e.kind() == IoErrorKind::timeout ? exit_timeout : exit_link;
  } catch (const InstrumentError& e) {
    std::cerr << "zout scpi: " << e.what() << "\n";
    return exit_instrument_error;
  }
  return exit_ok;
}

}  // namespace

bool is_query(std::string_view program_message) {
  bool in_header = true;
  bool in_quote = false;
  char quote = '\0';
  char last_header_char = '\0';
  for (char c : program_message) {
    if (in_quote) {
      if (c == quote) in_quote = false;
      continue;
    }
    if (c == '"' || c == '\'') {
      in_quote = true;
      quote = c;
      in_header = false;
    } else if (c == ';') {
      if (last_header_char == '?') return true;
      in_header = true;
      last_header_char = '\0';
    } else if (c == ' ' || c == '\t') {
      if (last_header_char != '\0') in_header = false;
    } else if (in_header) {
      last_header_char = c;
    }
  }
  return last_header_char == '?';
}

void add_scpi_command(CLI::App& app, int& exit_code) {
  auto options = std::make_shared<ScpiOptions>();
  auto* verb = app.add_subcommand("scpi", "Send SCPI commands to one instrument and print each query's reply");
  verb->add_option("address", options->address,
                   "Instrument address: tcp://HOST:PORT or serial:///dev/ttyUSB0?baud=115200")
      ->required();
  verb->add_option("commands", options->commands,
                   "SCPI commands, sent in turn; a command whose header ends in '?' is a query")
      ->required();
  verb->add_option("--timeout-ms", options->timeout_ms, "Deadline for each command, in milliseconds")
      ->default_val(2000)
      ->check(CLI::Range(1, 3'600'000));
  verb->add_flag("--check-errors", options->check_errors,
                 "Afterwards read SYSTem:ERRor? until empty; exit 5 if the instrument reported any");
  verb->footer(
      "Exit status: 0 ok, 2 bad arguments or address, 3 timeout, 4 link or reply error,\n"
      "5 instrument error-queue entries (with --check-errors).\n"
      "Example: zout scpi tcp://127.0.0.1:5601 '*IDN?' 'MEASure:VOLTage:DC?'");
  verb->callback([options, &exit_code] { exit_code = run_scpi(*options); });
}

}  // namespace zout::cli
