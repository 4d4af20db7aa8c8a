#pragma once
// `zout query "SQL"`: runs one read-only SQL statement against the store and prints the rows
// as an aligned table (default), CSV (RFC 4180) or a JSON array of objects. Anything that
// would write, attach another file or load an extension is refused (daemon/store/
// read_only_query.h says how); a statement running past --timeout-ms is stopped.

#include <CLI/CLI.hpp>

#include <string>

#include "daemon/store/read_only_query.h"

namespace zout::cli {

// Adds the `query` verb to `app`; the verb's callback sets `exit_code`.
void add_query_command(CLI::App& app, int& exit_code);

// How a cell is written in table and CSV output: NULL as nothing, integers in decimal, reals
// in the shortest form that reads back exactly (always with a '.' or an exponent, so a real
// never looks like an integer), text as is, blobs as X'hex'.
std::string cell_text(const store::QueryValue& value);

// One CSV field per RFC 4180 §2: quoted when it holds a comma, a double quote, CR or LF, with
// each double quote doubled.
std::string csv_field(const std::string& text);

}  // namespace zout::cli
