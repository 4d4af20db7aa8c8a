#pragma once
// Where the `zout` client finds its bench file, the daemon's control socket and the database.
// Each has an option, then an environment variable, then a default:
//   bench file: --bench FILE, $ZOUT_BENCH, <sysconfdir>/zout/bench.json when this zout is the
//               installed one (cmake --install), else the source tree's config/bench.sim.json;
//   socket:     --socket PATH, $ZOUT_SOCKET, the bench file's control.socket;
//   database:   --db FILE, $ZOUT_DB, the bench file's database.
// The bench file is read only when a socket or database path is not given otherwise.

#include <CLI/CLI.hpp>

#include <string>

namespace zout::cli {

struct ClientPaths {
  std::string bench;     // as given (may be empty: then found by the rules above)
  std::string socket;
  std::string database;

  // Adds --bench, --socket and --db to a verb. `with_socket`/`with_database` pick which apply.
  void add_options(CLI::App& verb, bool with_socket, bool with_database);

  // The bench file to use; throws std::runtime_error saying what to give when none is found.
  std::string bench_file() const;
  // The control socket / database path by the rules above; a bench file that does not load
  // is a ConfigError naming the file, JSON path and rule.
  std::string socket_path() const;
  std::string database_path() const;
};

}  // namespace zout::cli
