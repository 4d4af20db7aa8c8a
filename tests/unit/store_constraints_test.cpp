// The schema's own checks, exercised with raw SQL on a real file (so they hold for any
// writer, not only StoreWriter), and StoreWriter's refusals of what SQLite would mangle.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <limits>

#include "tests/support/temp_dir.h"
#include "daemon/store/statement.h"
#include "daemon/store/store_error.h"
#include "daemon/store/store_writer.h"

using namespace zout::store;
namespace fs = std::filesystem;
using zout::test::TempDir;
using zout::test::file_bytes;

namespace {

// A store with one of everything: station 1, meter 1, plan 1, unit 1, run 1 (running), sweep 1,
// point 1 with one reading.
struct Fixture {
  TempDir dir{"zout-store-constraints"};
  StoreWriter writer{dir.path / "z.db"};
  std::int64_t run = 0;
  std::int64_t sweep = 0;
  std::int64_t meter = 0;
  Fixture() {
    const auto now = std::chrono::system_clock::now();
    const auto station = writer.record_station("line-1", now);
    meter = writer.record_instrument({station, "meter", "tcp://127.0.0.1:5602", "Acme", "DM-6", "SN42", "1.0"}, now);
    const auto plan = writer.record_plan("cw4", R"({"dut":{"stages":4}})", now);
    const auto unit = writer.record_unit("CW4-0001", "CW4", now);
    run = writer.create_run({unit, plan, station, RunKind::production, RunState::running, now, "", ""});
    sweep = writer.start_sweep(run, 0, now);
    writer.commit_point(good_point(0), {{meter, "dc_volts", 2000.0, now}});
  }
  PointRecord good_point(int step) const {
    PointRecord p;
    p.sweep_id = sweep;
    p.step_index = step;
    p.set_load_amps = 1e-4;
    p.dc_volts = 1880.0;
    p.settle_s = 1.0;
    p.step_started_at = std::chrono::system_clock::now();
    p.taken_at = p.step_started_at;
    return p;
  }
  std::int64_t count(const std::string& table) {
    Statement statement = writer.database().prepare("SELECT count(*) FROM " + table);
    statement.step();
    return statement.column_int(0);
  }
  // Runs `sql` and returns the message of the StoreError(bad_input) it must raise.
  std::string refusal(const std::string& sql) {
    try {
      writer.database().exec(sql);
    } catch (const StoreError& e) {
      CHECK(e.kind() == StoreError::Kind::bad_input);
      return e.what();
    }
    FAIL("the schema accepted: " << sql);
    return "";
  }
};

const std::string point_columns =
    "INSERT INTO point (sweep_id, step_index, set_load_amps, set_load_ohms, dc_volts, ripple_pp_volts, settle_s, settled, "
    "step_started_at, taken_at) VALUES ";

}  // namespace

TEST_CASE("the schema refuses unknown run states and kinds", "[store]") {
  Fixture f;
  REQUIRE_THAT(f.refusal("UPDATE run SET state = 'paused'"), Catch::Contains("run state can only move forward"));
  REQUIRE_THAT(f.refusal("INSERT INTO run (unit_id, plan_id, station_id, kind, state, queued_at) "
                         "VALUES (1, 1, 1, 'soak', 'paused', '2026-12-01T21:15:14.123Z')"),
               Catch::Contains("CHECK constraint failed"));
  REQUIRE_THAT(f.refusal("INSERT INTO run (unit_id, plan_id, station_id, kind, state, queued_at) "
                         "VALUES (1, 1, 1, 'burn-in', 'queued', '2026-12-01T21:15:14.123Z')"),
               Catch::Contains("CHECK constraint failed"));
  REQUIRE_THAT(f.refusal("INSERT INTO run (unit_id, plan_id, station_id, kind, state, queued_at) "
                         "VALUES (1, 1, 1, 'soak', 'passed', '2026-12-01T21:15:14.123Z')"),  // ended, with no end time
               Catch::Contains("CHECK constraint failed"));
  REQUIRE(f.count("run") == 1);
}

TEST_CASE("the schema refuses infinities, and NaN where a number is required", "[store]") {
  Fixture f;
  // 1e999 is +Inf to SQLite's parser; 0.0/0 is NULL, which is how SQLite stores a NaN.
  REQUIRE_THAT(f.refusal(point_columns + "(1, 5, 1e-4, NULL, 1e999, NULL, 1.0, 1, '2026-12-01T21:15:14.123Z', '2026-12-01T21:15:14.123Z')"),
               Catch::Contains("CHECK constraint failed") && Catch::Contains("dc_volts"));
  REQUIRE_THAT(f.refusal(point_columns + "(1, 5, 1e-4, NULL, -1e999, NULL, 1.0, 1, '2026-12-01T21:15:14.123Z', '2026-12-01T21:15:14.123Z')"),
               Catch::Contains("dc_volts"));
  REQUIRE_THAT(f.refusal(point_columns + "(1, 5, 1e-4, NULL, 0.0/0, NULL, 1.0, 1, '2026-12-01T21:15:14.123Z', '2026-12-01T21:15:14.123Z')"),
               Catch::Contains("NOT NULL constraint failed: point.dc_volts"));
  REQUIRE_THAT(f.refusal(point_columns + "(1, 5, 1e-4, NULL, 1880, 1e999, 1.0, 1, '2026-12-01T21:15:14.123Z', '2026-12-01T21:15:14.123Z')"),
               Catch::Contains("ripple_pp_volts"));
  REQUIRE_THAT(f.refusal(point_columns + "(1, 5, 1e-4, NULL, 'high', NULL, 1.0, 1, '2026-12-01T21:15:14.123Z', '2026-12-01T21:15:14.123Z')"),
               Catch::Contains("dc_volts"));
  REQUIRE_THAT(f.refusal("INSERT INTO sweep_result (sweep_id, computed_at, fit_points, z_out_ohms) "
                         "VALUES (1, '2026-12-01T21:15:14.123Z', 3, 1e999)"),
               Catch::Contains("z_out_ohms"));
  // SCPI's overload marker 9.91E37 is not a reading.
  REQUIRE_THAT(f.refusal("INSERT INTO reading VALUES (1, 9, 1, 'dc_volts', 9.91e37, '2026-12-01T21:15:14.123Z')"),
               Catch::Contains("value"));
  REQUIRE(f.count("point") == 1);
  REQUIRE(f.count("reading") == 1);
}

TEST_CASE("the writer refuses NaN and infinities with the field's name, and writes nothing", "[store]") {
  Fixture f;
  const double nan = std::numeric_limits<double>::quiet_NaN();
  const double inf = std::numeric_limits<double>::infinity();
  PointRecord p = f.good_point(1);
  p.dc_volts = nan;
  REQUIRE_THROWS_WITH(f.writer.commit_point(p, {{f.meter, "dc_volts", 1.0, p.taken_at}}), Catch::Contains("dc_volts must be a finite number, not nan"));
  p = f.good_point(1);
  p.ripple_rms_volts = inf;  // optional fields too: NaN there would silently become "absent"
  REQUIRE_THROWS_WITH(f.writer.commit_point(p, {{f.meter, "dc_volts", 1.0, p.taken_at}}), Catch::Contains("ripple_rms_volts must be a finite number, not inf"));
  // A bad reading after a good one: the point and the good reading are rolled back too.
  p = f.good_point(1);
  REQUIRE_THROWS_WITH(f.writer.commit_point(p, {{f.meter, "dc_volts", 1.0, p.taken_at}, {f.meter, "ac_rms_volts", nan, p.taken_at}}), Catch::Contains("reading 1 (ac_rms_volts)") && Catch::Contains("value must be a finite number"));
  REQUIRE_THROWS_WITH(f.writer.commit_point(p, {{f.meter, "dc", 1.0, p.taken_at}}), Catch::Contains("reading 0 (dc)") && Catch::Contains("CHECK constraint failed"));
  REQUIRE_THROWS_WITH(f.writer.commit_point(p, {}), Catch::Contains("has no readings"));
  SweepResultRecord r;
  r.sweep_id = f.sweep;
  r.z_out_stderr_ohms = nan;
  REQUIRE_THROWS_WITH(f.writer.record_sweep_result(r), Catch::Contains("z_out_stderr_ohms must be a finite number"));
  REQUIRE(f.count("point") == 1);
  REQUIRE(f.count("reading") == 1);
  REQUIRE(f.count("sweep_result") == 0);
  f.writer.commit_point(p, {{f.meter, "dc_volts", 1.0, p.taken_at}});  // and the store still takes good data
  REQUIRE(f.count("point") == 2);
}

TEST_CASE("the schema refuses malformed times, a set load of both kinds, and dangling references", "[store]") {
  Fixture f;
  REQUIRE_THAT(f.refusal(point_columns + "(1, 5, 1e-4, NULL, 1880, NULL, 1.0, 1, '2026-12-01 21:15:14', '2026-12-01T21:15:14.123Z')"),
               Catch::Contains("step_started_at"));
  REQUIRE_THAT(f.refusal(point_columns + "(1, 5, 1e-4, 1e6, 1880, NULL, 1.0, 1, '2026-12-01T21:15:14.123Z', '2026-12-01T21:15:14.123Z')"),
               Catch::Contains("CHECK constraint failed"));
  REQUIRE_THAT(f.refusal(point_columns + "(1, 5, NULL, NULL, 1880, NULL, 1.0, 1, '2026-12-01T21:15:14.123Z', '2026-12-01T21:15:14.123Z')"),
               Catch::Contains("CHECK constraint failed"));
  REQUIRE_THAT(f.refusal(point_columns + "(999, 5, 1e-4, NULL, 1880, NULL, 1.0, 1, '2026-12-01T21:15:14.123Z', '2026-12-01T21:15:14.123Z')"),
               Catch::Contains("FOREIGN KEY constraint failed"));
  REQUIRE_THAT(f.refusal("INSERT INTO event (at, level, source, code, message) VALUES ('2026-12-01T21:15:14.123Z', 'panic', 'engine', 'x', '')"),
               Catch::Contains("CHECK constraint failed"));
  REQUIRE(f.count("point") == 1);
}

TEST_CASE("run states only move forward, plans and points never change", "[store]") {
  Fixture f;
  const auto now = std::chrono::system_clock::now();
  REQUIRE_THROWS_WITH(f.writer.set_run_state(f.run, RunState::running, now), Catch::Contains("is already running"));
  f.writer.set_run_state(f.run, RunState::passed, now);
  REQUIRE_THROWS_WITH(f.writer.set_run_state(f.run, RunState::running, now), Catch::Contains("run state can only move forward"));
  REQUIRE_THROWS_WITH(f.writer.set_run_state(f.run, RunState::failed, now), Catch::Contains("run state can only move forward"));
  REQUIRE_THROWS_WITH(f.writer.set_run_state(12345, RunState::aborted, now), Catch::Contains("no run 12345"));
  REQUIRE_THAT(f.refusal("UPDATE run SET unit_id = unit_id + 1"), Catch::Contains("a run keeps its unit"));
  REQUIRE_THAT(f.refusal("UPDATE plan SET content_json = '{}'"), Catch::Contains("plan rows are immutable"));
  REQUIRE_THAT(f.refusal("UPDATE point SET dc_volts = 0"), Catch::Contains("points are immutable"));
  REQUIRE_THAT(f.refusal("UPDATE reading SET value = 0"), Catch::Contains("readings are immutable"));

  const auto queued = f.writer.create_run({1, 1, 1, RunKind::production, RunState::queued, now, "", ""});
  REQUIRE_THROWS_WITH(f.writer.set_run_state(queued, RunState::passed, now), Catch::Contains("run state can only move forward"));
  REQUIRE_THROWS_AS(f.writer.create_run({1, 1, 1, RunKind::production, RunState::passed, now, "", ""}), StoreError);
}
