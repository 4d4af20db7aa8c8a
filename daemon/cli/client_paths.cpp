#include "client_paths.h"

#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <stdexcept>
#include <system_error>

#include "daemon/plan/bench_config.h"

namespace zout::cli {
namespace {

std::string environment(const char* name) {
  const char* value = std::getenv(name);
  return value != nullptr ? std::string(value) : std::string();
}

// The installed bench file (<sysconfdir>/zout/bench.json) when this program is the installed
// one (it runs from <bindir>); empty otherwise.
std::string installed_bench() {
  std::error_code error;
  const auto self = std::filesystem::read_symlink("/proc/self/exe", error);
  if (error || self.parent_path() != std::filesystem::path(ZOUT_INSTALL_BINDIR)) return {};
  const std::filesystem::path bench(ZOUT_INSTALLED_BENCH);
  return std::filesystem::exists(bench, error) ? bench.string() : std::string();
}

}  // namespace

void ClientPaths::add_options(CLI::App& verb, bool with_socket, bool with_database) {
  verb.add_option("--bench", bench, "bench file (default: $ZOUT_BENCH, the installed or the simulated bench)");
  if (with_socket) verb.add_option("--socket", socket, "zoutd's control socket (default: $ZOUT_SOCKET, the bench file's)");
  if (with_database) verb.add_option("--db", database, "database file (default: $ZOUT_DB, the bench file's)");
}

std::string ClientPaths::bench_file() const {
  if (!bench.empty()) return bench;
  if (auto from_environment = environment("ZOUT_BENCH"); !from_environment.empty()) return from_environment;
  if (auto installed = installed_bench(); !installed.empty()) return installed;
  const std::string source_tree = std::string(ZOUT_SOURCE_DIR) + "/config/bench.sim.json";
  if (std::filesystem::exists(source_tree)) return source_tree;
  throw std::runtime_error("no bench file: give --bench FILE or set ZOUT_BENCH");
}

std::string ClientPaths::socket_path() const {
  if (!socket.empty()) return socket;
  if (auto from_environment = environment("ZOUT_SOCKET"); !from_environment.empty()) return from_environment;
  return load_bench_file(bench_file()).control_socket_path;
}

std::string ClientPaths::database_path() const {
  if (!database.empty()) return database;
  if (auto from_environment = environment("ZOUT_DB"); !from_environment.empty()) return from_environment;
  return load_bench_file(bench_file()).database_path;
}

}  // namespace zout::cli
