#pragma once
// `zout scpi ADDRESS COMMAND...`: sends each command in turn over TCP or serial and prints
// each query's reply on its own line. For bringing up a bench by hand.

#include <CLI/CLI.hpp>

namespace zout::cli {

// Adds the `scpi` verb to `app`; the verb's callback sets `exit_code`.
void add_scpi_command(CLI::App& app, int& exit_code);

// True when an SCPI program message expects a reply: some command in it (commands are
// joined by ';') has a header ending in '?'. Quoted strings are skipped.
bool is_query(std::string_view program_message);

}  // namespace zout::cli
