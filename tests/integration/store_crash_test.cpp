// Crash safety of the store: a real writer process (zout-store-crash-writer, built from
// daemon/store/tools/crash_writer.cpp) is killed with SIGKILL at random moments, eight times
// on one database. Afterwards the file must pass PRAGMA integrity_check, hold every point the
// writer reported committed with all six of its readings, and hold no point with a partial
// set of readings.
#include <catch2/catch.hpp>

#include <fcntl.h>
#include <poll.h>
#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <random>
#include <set>
#include <sstream>

#include "tests/support/temp_dir.h"
#include "daemon/store/database.h"
#include "daemon/store/statement.h"
#include "daemon/store/store_writer.h"

extern char** environ;

using namespace zout::store;
namespace fs = std::filesystem;
using zout::test::TempDir;
using zout::test::file_bytes;

namespace {

// Starts the writer, lets it run for `run_for`, kills it with SIGKILL, and returns everything
// it printed on stdout (its stderr goes to `err_file`).
std::string run_and_kill(const std::vector<std::string>& argv, std::chrono::milliseconds run_for, const fs::path& err_file) {
  int out_pipe[2];
  REQUIRE(::pipe2(out_pipe, O_CLOEXEC) == 0);
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_adddup2(&actions, out_pipe[1], 1);
  posix_spawn_file_actions_addopen(&actions, 2, err_file.c_str(), O_WRONLY | O_CREAT | O_APPEND, 0644);
  std::vector<char*> args;
  for (const auto& arg : argv) args.push_back(const_cast<char*>(arg.c_str()));
  args.push_back(nullptr);
  pid_t pid = 0;
  const int spawned = ::posix_spawn(&pid, args[0], &actions, nullptr, args.data(), environ);
  posix_spawn_file_actions_destroy(&actions);
  ::close(out_pipe[1]);
  REQUIRE(spawned == 0);

  std::string out;
  char chunk[4096];
  const auto deadline = std::chrono::steady_clock::now() + run_for;
  bool open = true;
  while (open) {
    const auto left = std::chrono::duration_cast<std::chrono::milliseconds>(deadline - std::chrono::steady_clock::now());
    if (left.count() <= 0) break;
    pollfd fd{out_pipe[0], POLLIN, 0};
    if (::poll(&fd, 1, static_cast<int>(left.count())) <= 0) continue;
    const ssize_t n = ::read(out_pipe[0], chunk, sizeof chunk);
    if (n > 0) {
      out.append(chunk, static_cast<std::size_t>(n));
    } else {
      open = false;
    }
  }
  ::kill(pid, SIGKILL);
  // What it wrote before dying is still in the pipe.
  for (ssize_t n; (n = ::read(out_pipe[0], chunk, sizeof chunk)) > 0;) out.append(chunk, static_cast<std::size_t>(n));
  ::close(out_pipe[0]);
  int status = 0;
  ::waitpid(pid, &status, 0);
  return out;
}

std::int64_t number(Database& db, const std::string& sql) {
  Statement statement = db.prepare(sql);
  REQUIRE(statement.step());
  return statement.column_int(0);
}

}  // namespace

TEST_CASE("a writer killed at random moments leaves every committed point whole", "[store][store-crash]") {
  TempDir dir("zout-store-crash");
  const fs::path db_path = dir.path / "crash.db";
  const fs::path err_file = dir.path / "writer.err";
  std::mt19937 random(20261201);  // seeded: the same kill times every run
  std::uniform_int_distribution<int> run_ms(20, 400);
  std::set<std::int64_t> reported;
  int kills_after_commits = 0;
  for (int kill = 0; kill < 8; ++kill) {
    const auto ms = std::chrono::milliseconds(run_ms(random));
    const std::string out = run_and_kill({ZOUT_STORE_CRASH_WRITER_PATH, db_path.string(), std::to_string(kill)}, ms, err_file);
    std::istringstream lines(out);
    int this_run = 0;
    for (std::string line; std::getline(lines, line);) {
      if (lines.eof()) break;  // a line cut short by the kill does not count
      REQUIRE(line.rfind("committed ", 0) == 0);
      reported.insert(std::stoll(line.substr(10)));
      ++this_run;
    }
    if (this_run > 0) ++kills_after_commits;
  }
  INFO("writer stderr: " << std::ifstream(err_file).rdbuf());
  REQUIRE(kills_after_commits >= 4);  // most kills landed while points were being written
  REQUIRE(reported.size() >= 8);

  Database db(db_path, Database::Access::read_write_create);
  {
    Statement check = db.prepare("PRAGMA integrity_check");
    REQUIRE(check.step());
    REQUIRE(check.column_text(0) == "ok");
  }
  REQUIRE(number(db, "SELECT count(*) FROM pragma_foreign_key_check") == 0);
  Statement readings = db.prepare("SELECT count(*) FROM reading WHERE point_id = :id");
  for (const std::int64_t id : reported) {
    INFO("point " << id);
    readings.bind_int(":id", id);
    REQUIRE(readings.step());
    REQUIRE(readings.column_int(0) == 6);
    readings.reset();
  }
  REQUIRE(number(db, "SELECT count(*) FROM point") >= static_cast<std::int64_t>(reported.size()));
  REQUIRE(number(db, "SELECT count(*) FROM point p WHERE (SELECT count(*) FROM reading r WHERE r.point_id = p.point_id) <> 6") == 0);
  REQUIRE(number(db, "SELECT count(*) FROM reading WHERE point_id NOT IN (SELECT point_id FROM point)") == 0);
  // Each restart marked the run its killed predecessor left running as interrupted.
  const auto runs = number(db, "SELECT count(*) FROM run");
  REQUIRE(runs >= 1);
  REQUIRE(number(db, "SELECT count(*) FROM run WHERE state = 'running'") <= 1);
  REQUIRE(number(db, "SELECT count(*) FROM run WHERE state = 'interrupted'") >= runs - 1);
}
