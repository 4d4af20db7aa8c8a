// The store against an outside reference: the sqlite3 command-line shell (Debian package
// sqlite3), run as a separate process. It must apply schema/*.sql by itself to the same schema
// StoreWriter makes, and read the views of a store StoreWriter wrote.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>

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

const char* const sqlite3_shell = "/usr/bin/sqlite3";

ChildResult shell(const fs::path& db, const std::string& sql, const std::string& mode = "-list") {
  REQUIRE(fs::exists(sqlite3_shell));  // scripts/install-deps installs the sqlite3 package
  return run_child({sqlite3_shell, "-bail", mode, db.string(), sql}, 20s);
}

TimePoint at(int s) { return sys_days{year{2026} / 12 / 1} + hours(21) + minutes(15) + seconds(14 + s) + milliseconds(123); }

}  // namespace

TEST_CASE("the sqlite3 shell applies schema/*.sql to the same schema StoreWriter makes", "[store]") {
  TempDir dir("zout-store-shell");
  const fs::path by_shell = dir.path / "shell.db";
  const fs::path by_writer = dir.path / "writer.db";
  const std::string schema = std::string(ZOUT_SOURCE_DIR) + "/schema";
  // The README's command, verbatim: cat schema/*.sql | sqlite3 FILE
  const ChildResult applied =
      run_child({"/bin/sh", "-c", "cat '" + schema + "'/*.sql | " + sqlite3_shell + " -bail '" + by_shell.string() + "'"}, 20s);
  INFO(applied.err);
  REQUIRE(applied.exit_code == 0);
  REQUIRE(applied.err.empty());
  { StoreWriter writer(by_writer); }
  const std::string dump_schema = "SELECT type, name, tbl_name, sql FROM sqlite_schema ORDER BY type, name";
  const ChildResult shell_schema = shell(by_shell, dump_schema);
  const ChildResult writer_schema = shell(by_writer, dump_schema);
  REQUIRE(shell_schema.exit_code == 0);
  REQUIRE(shell_schema.out.size() > 1000);
  REQUIRE(shell_schema.out == writer_schema.out);
  REQUIRE(shell(by_shell, "PRAGMA user_version").out == "4\n");
  REQUIRE(shell(by_writer, "PRAGMA user_version").out == "4\n");
}

TEST_CASE("the sqlite3 shell reads the views of a store StoreWriter wrote", "[store]") {
  TempDir dir("zout-store-shell");
  const fs::path db = dir.path / "z.db";
  std::int64_t run = 0;
  {
    StoreWriter writer(db);
    const auto station = writer.record_station("line-1", at(0));
    const auto meter = writer.record_instrument({station, "meter", "tcp://127.0.0.1:5602", "Acme", "DM-6", "SN42", "1.0"}, at(0));
    const auto plan = writer.record_plan("cw4-soak", R"({"dut":{"stages":4}})", at(0));
    const auto unit = writer.record_unit("CW4-0007", "CW4", at(0));
    run = writer.create_run({unit, plan, station, RunKind::soak, RunState::running, at(0), "ana", ""});
    for (int s = 0; s < 2; ++s) {
      const auto sweep = writer.start_sweep(run, s, at(1800 * s));
      for (int step = 0; step < 2; ++step) {
        PointRecord p;
        p.sweep_id = sweep;
        p.step_index = step;
        p.set_load_amps = 2.5e-4 * step;
        p.dc_volts = 2000.0 - 300.0 * step - 0.5 * s;
        p.ripple_pp_volts = 10.0 * step;
        p.settle_s = 1.5;
        p.step_started_at = at(1800 * s + 10 * step);
        p.taken_at = at(1800 * s + 10 * step + 2);
        writer.commit_point(p, {{meter, "dc_volts", p.dc_volts, p.taken_at}, {meter, "ac_rms_volts", 2.5 * step, p.taken_at}});
      }
      SweepResultRecord r;
      r.sweep_id = sweep;
      r.computed_at = at(1800 * s + 30);
      r.v_oc_volts = 2000.0 - 0.5 * s;
      r.z_out_ohms = 1.2e6 + 5e3 * s;
      r.ripple_rated_pp_volts = 10.0 + 0.25 * s;
      r.verdict = Verdict::pass;
      writer.record_sweep_result(r);
    }
    writer.set_run_state(run, RunState::passed, at(3700));
  }
  const ChildResult summary =
      shell(db, "SELECT run_id, serial, plan_name, kind, state, sweeps, v_oc_volts, z_out_ohms, ripple_rated_pp_volts, verdict "
                "FROM run_summary", "-csv");
  INFO(summary.err);
  REQUIRE(summary.exit_code == 0);
  REQUIRE(summary.out == std::to_string(run) + ",CW4-0007,cw4-soak,soak,passed,2,1999.5,1205000.0,10.25,pass\n");
  const ChildResult trend = shell(db, "SELECT sweep, sweep_started_at, elapsed_s, v_oc_volts, z_out_ohms FROM soak_trend ORDER BY sweep", "-csv");
  REQUIRE(trend.out ==
          "1,2026-12-01T21:15:14.123Z,0.0,2000.0,1200000.0\n"
          "2,2026-12-01T21:45:14.123Z,1800.0,1999.5,1205000.0\n");
  const ChildResult curve = shell(db, "SELECT sweep, step, load_amps, dc_volts, ripple_pp_volts FROM iv_curve ORDER BY sweep, step", "-csv");
  REQUIRE(curve.out ==
          "1,1,0.0,2000.0,0.0\n"
          "1,2,0.00025,1700.0,10.0\n"
          "2,1,0.0,1999.5,0.0\n"
          "2,2,0.00025,1699.5,10.0\n");
  const ChildResult history = shell(db, "SELECT serial, run_id, state, verdict FROM unit_history WHERE serial = 'CW4-0007'", "-csv");
  REQUIRE(history.out == "CW4-0007," + std::to_string(run) + ",passed,pass\n");
  REQUIRE(shell(db, "PRAGMA integrity_check").out == "ok\n");
  REQUIRE(shell(db, "PRAGMA foreign_key_check").out.empty());
  REQUIRE(shell(db, "PRAGMA journal_mode").out == "wal\n");
}
