// `zout query` as a real process on a real store: exact table, CSV and JSON output; every
// kind of write refused with exit 2 and a message naming it; a runaway query stopped (exit 6).
#include <catch2/catch.hpp>

#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "tests/support/temp_dir.h"
#include "daemon/store/store_writer.h"
#include "tests/support/child_process.h"

using namespace zout::store;
using namespace zout::test;
using namespace std::chrono;
namespace fs = std::filesystem;
using zout::test::TempDir;
using zout::test::file_bytes;

namespace {

TimePoint at(int s) { return sys_days{year{2026} / 12 / 1} + hours(21) + minutes(15) + seconds(14 + s) + milliseconds(123); }

// Two units, two runs, one result each; the writer is closed afterwards.
fs::path make_store(const TempDir& dir) {
  const fs::path file = dir.path / "history.db";
  StoreWriter writer(file);
  const auto station = writer.record_station("line-1", at(0));
  const auto meter = writer.record_instrument({station, "meter", "tcp://127.0.0.1:5602", "Acme", "DM-6", "SN42", "1.0"}, at(0));
  const auto plan = writer.record_plan("cw4, rev \"B\"", R"({"dut":{"stages":4}})", at(0));
  int index = 0;
  for (const auto& [serial, v_oc, verdict] : {std::tuple{"CW4-0001", 2000.25, Verdict::pass}, std::tuple{"CW4-0002", 1990.5, Verdict::fail}}) {
    const auto unit = writer.record_unit(serial, "CW4", at(0));
    const auto run = writer.create_run({unit, plan, station, RunKind::production, RunState::running, at(60 * index), "ana", ""});
    const auto sweep = writer.start_sweep(run, 0, at(60 * index));
    PointRecord p;
    p.sweep_id = sweep;
    p.set_load_amps = 0.0;
    p.dc_volts = v_oc;
    p.settle_s = 1.0;
    p.step_started_at = at(60 * index + 1);
    p.taken_at = at(60 * index + 2);
    writer.commit_point(p, {{meter, "dc_volts", v_oc, at(60 * index + 2)}});
    SweepResultRecord r;
    r.sweep_id = sweep;
    r.computed_at = at(60 * index + 3);
    r.v_oc_volts = v_oc;
    r.z_out_ohms = 1.2e6;
    r.verdict = verdict;
    writer.record_sweep_result(r);
    writer.set_run_state(run, verdict == Verdict::pass ? RunState::passed : RunState::failed, at(60 * index + 4));
    ++index;
  }
  return file;
}

ChildResult zout_query(const std::vector<std::string>& args) {
  std::vector<std::string> argv = {ZOUT_CLI_PATH, "query"};
  argv.insert(argv.end(), args.begin(), args.end());
  return run_child(argv, 20s);
}

const std::string summary_sql = "SELECT serial, plan_name, state, v_oc_volts, z_out_ohms, verdict FROM run_summary ORDER BY run_id";

}  // namespace

TEST_CASE("zout query prints an aligned table by default", "[store][cli]") {
  TempDir dir("zout-query-cli");
  const fs::path db = make_store(dir);
  const ChildResult r = zout_query({summary_sql, "--db", db.string()});
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  REQUIRE(r.out ==
          "serial    plan_name     state   v_oc_volts  z_out_ohms  verdict\n"
          "CW4-0001  cw4, rev \"B\"  passed  2000.25     1200000.0   pass\n"
          "CW4-0002  cw4, rev \"B\"  failed  1990.5      1200000.0   fail\n");
  REQUIRE(r.err.empty());
}

TEST_CASE("zout query --format csv quotes per RFC 4180 with CRLF line ends", "[store][cli]") {
  TempDir dir("zout-query-cli");
  const fs::path db = make_store(dir);
  const ChildResult r = zout_query({summary_sql, "--db", db.string(), "--format", "csv"});
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  REQUIRE(r.out ==
          "serial,plan_name,state,v_oc_volts,z_out_ohms,verdict\r\n"
          "CW4-0001,\"cw4, rev \"\"B\"\"\",passed,2000.25,1200000.0,pass\r\n"
          "CW4-0002,\"cw4, rev \"\"B\"\"\",failed,1990.5,1200000.0,fail\r\n");
  const ChildResult special = zout_query({"SELECT NULL AS none, 'two\nlines' AS text, 3 AS n", "--db", db.string(), "--format", "csv"});
  REQUIRE(special.out == "none,text,n\r\n,\"two\nlines\",3\r\n");
}

TEST_CASE("zout query --format json prints an array of objects with typed values", "[store][cli]") {
  TempDir dir("zout-query-cli");
  const fs::path db = make_store(dir);
  const ChildResult r = zout_query({summary_sql + " LIMIT 1", "--db", db.string(), "--format", "json"});
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  REQUIRE(r.out ==
          "[\n"
          "  {\"serial\": \"CW4-0001\", \"plan_name\": \"cw4, rev \\\"B\\\"\", \"state\": \"passed\", \"v_oc_volts\": 2000.25, "
          "\"z_out_ohms\": 1200000.0, \"verdict\": \"pass\"}\n"
          "]\n");
  const ChildResult empty = zout_query({"SELECT * FROM run WHERE 0", "--db", db.string(), "--format", "json"});
  REQUIRE(empty.out == "[]\n");
  const ChildResult nulls = zout_query({"SELECT NULL AS a, 7 AS b", "--db", db.string(), "--format", "json"});
  REQUIRE(nulls.out == "[\n  {\"a\": null, \"b\": 7}\n]\n");
}

TEST_CASE("zout query reads the database named by ZOUT_DB when --db is absent", "[store][cli]") {
  TempDir dir("zout-query-cli");
  const fs::path db = make_store(dir);
  ::setenv("ZOUT_DB", db.c_str(), 1);
  const ChildResult r = zout_query({"SELECT count(*) AS runs FROM run"});
  ::unsetenv("ZOUT_DB");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  REQUIRE(r.out == "runs\n2\n");
}

TEST_CASE("zout query refuses anything that would change the store, with exit 2", "[store][cli]") {
  TempDir dir("zout-query-cli");
  const fs::path db = make_store(dir);
  const std::string before = file_bytes(db);
  const std::vector<std::pair<std::string, std::string>> refused = {
      {"INSERT INTO unit (serial, first_seen_at) VALUES ('X', '2026-12-01T21:15:14.123Z')", "refused: INSERT into unit"},
      {"UPDATE run SET state = 'passed'", "refused: UPDATE of run.state"},
      {"DELETE FROM point", "refused: DELETE from point"},
      {"DROP TABLE reading", "refused: DROP TABLE reading"},
      {"ATTACH DATABASE '" + (dir.path / "elsewhere.db").string() + "' AS elsewhere", "refused: ATTACH of another database file"},
      {"PRAGMA journal_mode=DELETE", "refused: PRAGMA journal_mode = DELETE"},
      {"PRAGMA user_version=5", "refused: PRAGMA user_version = 5"},
      {"SELECT load_extension('x')", "refused: the function load_extension()"},
  };
  for (const auto& [sql, message] : refused) {
    INFO(sql);
    const ChildResult r = zout_query({sql, "--db", db.string()});
    REQUIRE(r.exit_code == 2);
    REQUIRE(r.out.empty());
    REQUIRE_THAT(r.err, Catch::StartsWith("zout query: " + message) && Catch::Contains("zout query only reads"));
  }
  REQUIRE(file_bytes(db) == before);
  REQUIRE_FALSE(fs::exists(dir.path / "elsewhere.db"));
  const ChildResult check = zout_query({"SELECT count(*) AS n FROM point", "--db", db.string()});
  REQUIRE(check.out == "n\n2\n");
}

TEST_CASE("zout query stops a runaway query at --timeout-ms with exit 6", "[store][cli]") {
  TempDir dir("zout-query-cli");
  const fs::path db = make_store(dir);
  const ChildResult r = zout_query({"WITH RECURSIVE n(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM n) SELECT max(i) FROM n",
                                    "--db", db.string(), "--timeout-ms", "300"});
  REQUIRE_FALSE(r.timed_out);
  REQUIRE(r.exit_code == 6);
  REQUIRE_THAT(r.err, Catch::Contains("stopped: the query ran past its time limit of 300 ms"));
}

TEST_CASE("zout query reports bad SQL, a missing database and a bad format clearly", "[store][cli]") {
  TempDir dir("zout-query-cli");
  const fs::path db = make_store(dir);
  const ChildResult typo = zout_query({"SELEC 1", "--db", db.string()});
  REQUIRE(typo.exit_code == 2);
  REQUIRE_THAT(typo.err, Catch::Contains("SQL error") && Catch::Contains("syntax error"));
  const ChildResult missing = zout_query({"SELECT 1", "--db", (dir.path / "absent.db").string()});
  REQUIRE(missing.exit_code == 1);
  REQUIRE_THAT(missing.err, Catch::Contains("absent.db: no such file") && Catch::Contains("--db FILE, the ZOUT_DB environment variable or --bench FILE"));
  REQUIRE_FALSE(fs::exists(dir.path / "absent.db"));
  const ChildResult format = zout_query({"SELECT 1", "--db", db.string(), "--format", "xml"});
  REQUIRE(format.exit_code == 2);
  REQUIRE_THAT(format.err, Catch::Contains("xml"));
}
