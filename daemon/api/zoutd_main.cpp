// zoutd: the background service. Loads the bench file, starts the engine (which opens the
// database, marks interrupted runs and puts the bench in safe state), serves the control
// socket, and on SIGTERM/SIGINT aborts the run in progress, leaves the bench in safe state
// and exits 0. Logs one line per event to stderr, for the service manager's journal.

#include <csignal>
#include <iostream>

#include <CLI/CLI.hpp>
#include <asio.hpp>

#include "daemon/api/control_methods.h"
#include "daemon/api/control_server.h"
#include "daemon/engine/engine.h"
#include "daemon/plan/bench_config.h"
#include "daemon/plan/config_error.h"
#include "daemon/store/database.h"

namespace {
constexpr long long kSqliteHeapLimitBytes = 1 << 20;  // all of zoutd's SQLite memory, soft
}  // namespace

int main(int argc, char** argv) {
  CLI::App app{"zoutd: runs voltage-multiplier test plans unattended on one bench"};
  std::string bench_path = "config/bench.sim.json";
  bool foreground = false;
  app.add_option("--bench", bench_path, "Bench file (instruments, database, control socket, safety maxima)")
      ->capture_default_str();
  app.add_flag("--foreground", foreground, "Stay attached to the terminal (the default; for service managers)");
  CLI11_PARSE(app, argc, argv);
  // SQLite's page caches (2 MiB per connection by default, three connections here) would
  // otherwise fill as the database grows and read as a slow RSS climb over a long soak; the
  // writes only append, so a small shared budget costs nothing (scripts/bench-sweep measures it).
  zout::store::limit_process_memory_bytes(kSqliteHeapLimitBytes);

  try {
    const zout::BenchConfig bench = zout::load_bench_file(bench_path);
    asio::io_context io;
    // The server exists before the engine starts: the engine notifies from start() on, from
    // its own thread, and broadcast() is safe from any thread. The requests it dispatches
    // run on this thread inside io.run(), after `methods` is set below; `methods` needs the
    // started engine (it opens the database read-only).
    std::unique_ptr<zout::ControlMethods> methods;
    zout::ControlServer server(io, bench.control_socket_path,
                               [&methods](const zout::rpc::Request& request, zout::ControlServer::CallContext& context) {
                                 return methods->call(request, context);
                               });
    zout::Engine engine(bench, [&server](const std::string& method, const nlohmann::json& params) {
      server.broadcast(method, params);
    });
    engine.start();
    methods = std::make_unique<zout::ControlMethods>(engine);
    server.start();
    std::cerr << "zoutd: listening on " << bench.control_socket_path << " (station " << bench.station
              << ", database " << bench.database_path << ")" << std::endl;
    // One JSON line on stdout once the socket accepts: the ready signal for scripts and tests.
    std::cout << nlohmann::json{{"socket", bench.control_socket_path}, {"database", bench.database_path},
                                {"station", bench.station}}
                     .dump()
              << std::endl;

    asio::signal_set signals(io, SIGTERM, SIGINT);
    signals.async_wait([&](const asio::error_code&, int signal_number) {
      std::cerr << "zoutd: signal " << signal_number << ": stopping" << std::endl;
      engine.stop();  // aborts the run in progress; bench left in safe state
      server.stop();
      io.stop();
    });
    io.run();
    engine.stop();
    server.stop();
    return 0;
  } catch (const zout::ConfigError& e) {
    std::cerr << "zoutd: " << e.what() << std::endl;
    return 2;
  } catch (const std::exception& e) {
    std::cerr << "zoutd: " << e.what() << std::endl;
    return 1;
  }
}
