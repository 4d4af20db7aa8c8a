// StoreWriter on a real SQLite file: every table round-trips, and the views answer with the
// rows and figures expected for a small history written here.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <cmath>
#include <filesystem>

#include "tests/support/temp_dir.h"
#include "daemon/cli/query_command.h"
#include "daemon/store/read_only_query.h"
#include "daemon/store/sha256.h"
#include "daemon/store/store_error.h"
#include "daemon/store/store_writer.h"
#include "daemon/store/utc_time.h"

using namespace zout::store;
using namespace std::chrono;
namespace fs = std::filesystem;
using zout::test::TempDir;
using zout::test::file_bytes;
using Rows = std::vector<std::vector<std::string>>;

namespace {

// Every row of `sql` as text: integers in decimal, reals in shortest exact form, NULL as "NULL".
Rows select(const fs::path& db, const std::string& sql) {
  Rows rows;
  ReadOnlyQuery query(db);
  query.run(sql, milliseconds(0), [](const auto&) {}, [&rows](const std::vector<QueryValue>& row) {
    std::vector<std::string> cells;
    for (const auto& value : row) {
      cells.push_back(std::holds_alternative<std::monostate>(value) ? "NULL" : zout::cli::cell_text(value));
    }
    rows.push_back(cells);
  });
  return rows;
}

// 2026-12-01T21:15:14.123Z plus `s` seconds.
TimePoint at(double s = 0) {
  return sys_days{year{2026} / 12 / 1} + hours(21) + minutes(15) + seconds(14) + milliseconds(123) +
         milliseconds(static_cast<long long>(std::llround(s * 1000)));
}

}  // namespace

TEST_CASE("times are written as ISO-8601 UTC with milliseconds", "[store]") {
  REQUIRE(format_utc(at()) == "2026-12-01T21:15:14.123Z");
  REQUIRE(format_utc(system_clock::time_point{}) == "1970-01-01T00:00:00.000Z");
  REQUIRE(format_utc(system_clock::time_point{} - milliseconds(1)) == "1969-12-31T23:59:59.999Z");
  REQUIRE(format_utc(sys_days{year{2028} / 2 / 29} + microseconds(999'999)) == "2028-02-29T00:00:00.999Z");
}

TEST_CASE("station, instrument, plan and unit are recorded once and found again", "[store]") {
  TempDir dir("zout-store-writer");
  const fs::path file = dir.path / "z.db";
  StoreWriter writer(file);

  const auto station = writer.record_station("line-1", at());
  REQUIRE(writer.record_station("line-1", at(60)) == station);
  REQUIRE(select(file, "SELECT station_id, name, first_seen_at, last_seen_at FROM station") ==
          Rows{{std::to_string(station), "line-1", "2026-12-01T21:15:14.123Z", "2026-12-01T21:16:14.123Z"}});

  const InstrumentRecord meter{station, "meter", "tcp://127.0.0.1:5602", "Acme", "DM-6", "SN42", "1.0.3"};
  const auto meter_id = writer.record_instrument(meter, at());
  REQUIRE(writer.record_instrument(meter, at(5)) == meter_id);
  InstrumentRecord upgraded = meter;
  upgraded.firmware = "1.1.0";
  const auto upgraded_id = writer.record_instrument(upgraded, at(10));
  REQUIRE(upgraded_id != meter_id);
  REQUIRE(select(file, "SELECT role, address, manufacturer, model, serial_number, firmware, first_seen_at, last_seen_at "
                       "FROM instrument ORDER BY instrument_id") ==
          Rows{{"meter", "tcp://127.0.0.1:5602", "Acme", "DM-6", "SN42", "1.0.3", "2026-12-01T21:15:14.123Z",
                "2026-12-01T21:15:19.123Z"},
               {"meter", "tcp://127.0.0.1:5602", "Acme", "DM-6", "SN42", "1.1.0", "2026-12-01T21:15:24.123Z",
                "2026-12-01T21:15:24.123Z"}});

  // The same plan written differently is the same plan; stored canonically, hashed as stored.
  const auto plan = writer.record_plan("cw4", R"({ "load": {"steps": [0, 1e-4], "mode": "current"}, "dut": {"stages": 4} })", at());
  REQUIRE(writer.record_plan("cw4", R"({"dut":{"stages":4},"load":{"mode":"current","steps":[0,0.0001]}})", at(1)) == plan);
  REQUIRE(writer.record_plan("cw4-copy", R"({"dut":{"stages":4},"load":{"mode":"current","steps":[0,0.0001]}})", at(2)) != plan);
  const std::string canonical = R"({"dut":{"stages":4},"load":{"mode":"current","steps":[0,0.0001]}})";
  REQUIRE(select(file, "SELECT name, content_json, content_sha256 FROM plan WHERE plan_id = " + std::to_string(plan)) ==
          Rows{{"cw4", canonical, sha256_hex(canonical)}});
  REQUIRE_THROWS_WITH(writer.record_plan("broken", "{\"dut\": ", at()), Catch::Contains("plan broken is not valid JSON"));
  REQUIRE_THROWS_WITH(writer.record_plan("list", "[1, 2]", at()), Catch::Contains("plan list must be a JSON object"));

  const auto unit = writer.record_unit("CW4-0001", "", at());
  REQUIRE(writer.record_unit("CW4-0001", "CW4", at(1)) == unit);  // the model is filled in
  REQUIRE(writer.record_unit("CW4-0001", "", at(2)) == unit);
  REQUIRE_THROWS_WITH(writer.record_unit("CW4-0001", "CW6", at(3)), Catch::Contains("unit CW4-0001 is recorded as model CW4, not CW6"));
  REQUIRE(select(file, "SELECT serial, model, first_seen_at FROM unit") ==
          Rows{{"CW4-0001", "CW4", "2026-12-01T21:15:14.123Z"}});
}

TEST_CASE("runs, sweeps, points with readings, sweep results and events round-trip", "[store]") {
  TempDir dir("zout-store-writer");
  const fs::path file = dir.path / "z.db";
  StoreWriter writer(file);
  const auto station = writer.record_station("line-1", at());
  const auto meter = writer.record_instrument({station, "meter", "tcp://127.0.0.1:5602", "Acme", "DM-6", "SN42", "1.0"}, at());
  const auto load = writer.record_instrument({station, "load", "tcp://127.0.0.1:5603", "Acme", "EL-1", "SN7", "2.0"}, at());
  const auto plan = writer.record_plan("cw4", R"({"dut":{"stages":4}})", at());
  const auto unit = writer.record_unit("CW4-0001", "CW4", at());

  const auto run = writer.create_run({unit, plan, station, RunKind::production, RunState::queued, at(), "ana", "first", 2});
  REQUIRE(select(file, "SELECT kind, state, queued_at, started_at, ended_at, operator, note, slot FROM run") ==
          Rows{{"production", "queued", "2026-12-01T21:15:14.123Z", "NULL", "NULL", "ana", "first", "2"}});
  writer.set_run_state(run, RunState::running, at(2));
  const auto sweep = writer.start_sweep(run, 0, at(3));

  PointRecord point;
  point.sweep_id = sweep;
  point.step_index = 0;
  point.set_load_amps = 1.25e-4;
  point.measured_load_amps = 1.2487e-4;
  point.dc_volts = 1849.0625;
  point.ripple_rms_volts = 1.5;
  point.ripple_pp_volts = 5.196152422706632;
  point.settle_s = 2.75;
  point.settled = false;
  point.step_started_at = at(4);
  point.taken_at = at(7.5);
  const auto point_id = writer.commit_point(point, {{meter, "dc_volts", 1849.0625, at(7.25)},
                                                    {meter, "ac_rms_volts", 1.5, at(7.375)},
                                                    {load, "load_amps", 1.2487e-4, at(7.5)}});
  REQUIRE(select(file, "SELECT point_id, sweep_id, step_index, set_load_amps, set_load_ohms, measured_load_amps, dc_volts, "
                       "ripple_rms_volts, ripple_pp_volts, settle_s, settled, step_started_at, taken_at FROM point") ==
          Rows{{std::to_string(point_id), std::to_string(sweep), "0", "0.000125", "NULL", "0.00012487", "1849.0625", "1.5",
                "5.196152422706632", "2.75", "0", "2026-12-01T21:15:18.123Z", "2026-12-01T21:15:21.623Z"}});
  REQUIRE(select(file, "SELECT point_id, seq, instrument_id, kind, value, taken_at FROM reading ORDER BY seq") ==
          Rows{{std::to_string(point_id), "0", std::to_string(meter), "dc_volts", "1849.0625", "2026-12-01T21:15:21.373Z"},
               {std::to_string(point_id), "1", std::to_string(meter), "ac_rms_volts", "1.5", "2026-12-01T21:15:21.498Z"},
               {std::to_string(point_id), "2", std::to_string(load), "load_amps", "0.00012487", "2026-12-01T21:15:21.623Z"}});

  // A point in resistance mode carries the set resistance instead of a set current.
  PointRecord resistive = point;
  resistive.step_index = 1;
  resistive.set_load_amps.reset();
  resistive.set_load_ohms = 15e6;
  resistive.measured_load_amps.reset();
  resistive.ripple_rms_volts.reset();
  resistive.ripple_pp_volts.reset();
  writer.commit_point(resistive, {{meter, "dc_volts", 1900.5, at(9)}});
  REQUIRE(select(file, "SELECT set_load_amps, set_load_ohms, measured_load_amps, ripple_rms_volts, ripple_pp_volts "
                       "FROM point WHERE step_index = 1") ==
          Rows{{"NULL", "15000000.0", "NULL", "NULL", "NULL"}});

  writer.end_sweep(sweep, at(20));
  SweepResultRecord result;
  result.sweep_id = sweep;
  result.computed_at = at(21);
  result.fit_points = 4;
  double figure = 1.0;
  // Give every figure its own value, so a mixed-up column would show.
  for (auto* field : {&result.v_oc_volts, &result.z_out_ohms, &result.z_out_stderr_ohms, &result.z_chord_ohms,
                      &result.cascade_r_ohms, &result.cascade_r_stderr_ohms, &result.effective_capacitance_farads,
                      &result.diode_drop_volts, &result.diode_m, &result.diode_i0_amps, &result.rated_load_amps,
                      &result.ripple_rated_rms_volts, &result.ripple_rated_pp_volts, &result.model_v_oc_volts,
                      &result.model_z_out_ohms, &result.model_droop_rated_volts, &result.model_ripple_rated_pp_volts,
                      &result.v_oc_drift_volts_per_hour, &result.v_oc_drift_stderr_volts_per_hour,
                      &result.z_out_drift_ohms_per_hour, &result.z_out_drift_stderr_ohms_per_hour}) {
    *field = figure;
    figure += 1.0;
  }
  result.ripple_drift_volts_per_hour.reset();  // absent figures stay NULL
  result.ripple_drift_stderr_volts_per_hour.reset();
  result.verdict = Verdict::fail;
  result.verdict_reasons = {"z_out_ohms 1.5e6 above the limit 1.3e6", "ripple \"high\""};
  writer.record_sweep_result(result);
  REQUIRE(select(file, "SELECT fit_points, v_oc_volts, z_out_ohms, z_out_stderr_ohms, z_chord_ohms, cascade_r_ohms, "
                       "cascade_r_stderr_ohms, effective_capacitance_farads, diode_drop_volts, diode_m, diode_i0_amps, "
                       "rated_load_amps, ripple_rated_rms_volts, ripple_rated_pp_volts, model_v_oc_volts, model_z_out_ohms, "
                       "model_droop_rated_volts, model_ripple_rated_pp_volts, v_oc_drift_volts_per_hour, "
                       "v_oc_drift_stderr_volts_per_hour, z_out_drift_ohms_per_hour, z_out_drift_stderr_ohms_per_hour, "
                       "ripple_drift_volts_per_hour, ripple_drift_stderr_volts_per_hour, verdict, verdict_reasons_json, "
                       "computed_at FROM sweep_result") ==
          Rows{{"4", "1.0", "2.0", "3.0", "4.0", "5.0", "6.0", "7.0", "8.0", "9.0", "10.0", "11.0", "12.0", "13.0", "14.0",
                "15.0", "16.0", "17.0", "18.0", "19.0", "20.0", "21.0", "NULL", "NULL", "fail",
                R"(["z_out_ohms 1.5e6 above the limit 1.3e6","ripple \"high\""])", "2026-12-01T21:15:35.123Z"}});
  REQUIRE_THROWS_AS(writer.record_sweep_result(result), StoreError);  // one result per sweep

  writer.set_run_state(run, RunState::failed, at(22));
  REQUIRE(select(file, "SELECT state, started_at, ended_at FROM run") ==
          Rows{{"failed", "2026-12-01T21:15:16.123Z", "2026-12-01T21:15:36.123Z"}});
  REQUIRE(select(file, "SELECT started_at, ended_at FROM sweep") ==
          Rows{{"2026-12-01T21:15:17.123Z", "2026-12-01T21:15:34.123Z"}});

  const auto event = writer.record_event({at(23), EventLevel::warning, "meter", "reconnect",
                                          "meter dropped the link; reconnected after 2 tries", run, station});
  writer.record_event({at(24), EventLevel::info, "engine", "startup", "zoutd started", std::nullopt, std::nullopt});
  REQUIRE(select(file, "SELECT event_id, at, level, source, code, message, run_id, station_id FROM event ORDER BY event_id") ==
          Rows{{std::to_string(event), "2026-12-01T21:15:37.123Z", "warning", "meter", "reconnect",
                "meter dropped the link; reconnected after 2 tries", std::to_string(run), std::to_string(station)},
               {std::to_string(event + 1), "2026-12-01T21:15:38.123Z", "info", "engine", "startup", "zoutd started",
                "NULL", "NULL"}});
}

TEST_CASE("runs left running are marked interrupted at start-up", "[store]") {
  TempDir dir("zout-store-writer");
  const fs::path file = dir.path / "z.db";
  StoreWriter writer(file);
  const auto station = writer.record_station("line-1", at());
  const auto plan = writer.record_plan("cw4", R"({"dut":{"stages":4}})", at());
  const auto unit = writer.record_unit("CW4-0001", "CW4", at());
  writer.create_run({unit, plan, station, RunKind::soak, RunState::running, at(), "", ""});
  writer.create_run({unit, plan, station, RunKind::soak, RunState::running, at(1), "", ""});
  writer.create_run({unit, plan, station, RunKind::production, RunState::queued, at(2), "", ""});
  REQUIRE(writer.interrupt_running_runs(at(100)) == 2);
  REQUIRE(writer.interrupt_running_runs(at(101)) == 0);
  REQUIRE(select(file, "SELECT state, ended_at FROM run ORDER BY run_id") ==
          Rows{{"interrupted", "2026-12-01T21:16:54.123Z"}, {"interrupted", "2026-12-01T21:16:54.123Z"}, {"queued", "NULL"}});
}

TEST_CASE("a clock stepped back does not stop a run or a sweep from ending", "[store]") {
  TempDir dir("zout-store-writer");
  const fs::path file = dir.path / "z.db";
  StoreWriter writer(file);
  const auto station = writer.record_station("line-1", at());
  const auto plan = writer.record_plan("cw4", R"({"dut":{"stages":4}})", at());
  const auto unit = writer.record_unit("CW4-0001", "CW4", at());
  const auto run = writer.create_run({unit, plan, station, RunKind::production, RunState::queued, at(10), "", ""});
  writer.set_run_state(run, RunState::running, at(5));  // before it was queued
  const auto sweep = writer.start_sweep(run, 0, at(20));
  writer.end_sweep(sweep, at(15));
  writer.set_run_state(run, RunState::passed, at(-60));
  REQUIRE(select(file, "SELECT queued_at, started_at, ended_at FROM run") ==
          Rows{{"2026-12-01T21:15:24.123Z", "2026-12-01T21:15:24.123Z", "2026-12-01T21:15:24.123Z"}});
  REQUIRE(select(file, "SELECT started_at, ended_at FROM sweep") ==
          Rows{{"2026-12-01T21:15:34.123Z", "2026-12-01T21:15:34.123Z"}});
}

TEST_CASE("the views answer the questions users ask", "[store]") {
  TempDir dir("zout-store-writer");
  const fs::path file = dir.path / "z.db";
  StoreWriter writer(file);
  const auto station = writer.record_station("line-1", at());
  const auto meter = writer.record_instrument({station, "meter", "tcp://127.0.0.1:5602", "Acme", "DM-6", "SN42", "1.0"}, at());
  const auto production = writer.record_plan("cw4-production", R"({"dut":{"stages":4}})", at());
  const auto soak = writer.record_plan("cw4-soak", R"({"dut":{"stages":4},"repeat":{"count":3,"interval_s":600}})", at());
  const auto unit_a = writer.record_unit("CW4-0001", "CW4", at());
  const auto unit_b = writer.record_unit("CW4-0002", "CW4", at());

  const auto add_point = [&](std::int64_t sweep, int step, double amps, std::optional<double> measured, double volts,
                             double rms, double pp, double t) {
    PointRecord p;
    p.sweep_id = sweep;
    p.step_index = step;
    p.set_load_amps = amps;
    p.measured_load_amps = measured;
    p.dc_volts = volts;
    p.ripple_rms_volts = rms;
    p.ripple_pp_volts = pp;
    p.settle_s = 1.0;
    p.step_started_at = at(t);
    p.taken_at = at(t + 1);
    writer.commit_point(p, {{meter, "dc_volts", volts, at(t + 1)}});
  };
  const auto add_result = [&](std::int64_t sweep, double t, double v_oc, double z_out, double ripple,
                              std::optional<Verdict> verdict, std::vector<std::string> reasons = {}) {
    SweepResultRecord r;
    r.sweep_id = sweep;
    r.computed_at = at(t);
    r.fit_points = 3;
    r.v_oc_volts = v_oc;
    r.z_out_ohms = z_out;
    r.rated_load_amps = 3e-4;
    r.ripple_rated_pp_volts = ripple;
    r.verdict = verdict;
    r.verdict_reasons = std::move(reasons);
    writer.record_sweep_result(r);
  };

  // Run 1: unit A passes production.
  const auto run1 = writer.create_run({unit_a, production, station, RunKind::production, RunState::running, at(), "ana", ""});
  const auto sweep1 = writer.start_sweep(run1, 0, at());
  add_point(sweep1, 0, 0.0, std::nullopt, 2000.0, 0.5, 2.0, 1);
  add_point(sweep1, 1, 1e-4, 1.001e-4, 1880.0, 1.5, 5.0, 4);
  add_point(sweep1, 2, 2e-4, 2.002e-4, 1760.0, 2.5, 9.0, 7);
  add_point(sweep1, 3, 3e-4, 3.003e-4, 1640.0, 3.5, 12.0, 10);
  add_result(sweep1, 12, 2000.25, 1.2e6, 12.5, Verdict::pass);
  writer.set_run_state(run1, RunState::passed, at(60));
  // Run 2: unit B fails production.
  const auto run2 = writer.create_run({unit_b, production, station, RunKind::production, RunState::running, at(120), "ana", ""});
  const auto sweep2 = writer.start_sweep(run2, 0, at(120));
  add_point(sweep2, 0, 0.0, 0.0, 1990.0, 0.5, 2.0, 121);
  add_point(sweep2, 1, 3e-4, 3e-4, 1540.0, 3.5, 12.0, 124);
  add_result(sweep2, 130, 1990.5, 1.5e6, 13.0, Verdict::fail, {"z_out_ohms 1.5e6 above the limit 1.3e6"});
  writer.set_run_state(run2, RunState::failed, at(180));
  // Run 3: unit A soaks, three sweeps ten minutes apart; only the last has a verdict.
  const auto run3 = writer.create_run({unit_a, soak, station, RunKind::soak, RunState::queued, at(3600), "bo", ""});
  writer.set_run_state(run3, RunState::running, at(3605));
  for (int s = 0; s < 3; ++s) {
    const double t = 3605 + 600.0 * s;
    const auto sweep = writer.start_sweep(run3, s, at(t));
    add_point(sweep, 0, 3e-4, 3e-4, 1640.0 - s, 3.5, 12.0, t + 1);
    add_result(sweep, t + 5, 2000.0 - 0.5 * s, 1.2e6 + 1e4 * s, 12.5 + 0.125 * s,
               s == 2 ? std::optional<Verdict>(Verdict::pass) : std::nullopt);
  }
  writer.set_run_state(run3, RunState::passed, at(3605 + 1300));
  // Run 4: unit B queued the next day, then aborted before it started.
  const auto run4 = writer.create_run({unit_b, production, station, RunKind::production, RunState::queued, at(86400), "", ""});
  writer.set_run_state(run4, RunState::aborted, at(86460));

  SECTION("run_summary: one row per run with the latest analysed sweep's figures") {
    REQUIRE(select(file, "SELECT run_id, station, serial, model, plan_name, kind, state, day, sweeps, v_oc_volts, "
                         "z_out_ohms, rated_load_amps, ripple_rated_pp_volts, verdict, verdict_reasons_json "
                         "FROM run_summary ORDER BY run_id") ==
            Rows{{std::to_string(run1), "line-1", "CW4-0001", "CW4", "cw4-production", "production", "passed", "2026-12-01",
                  "1", "2000.25", "1200000.0", "0.0003", "12.5", "pass", "[]"},
                 {std::to_string(run2), "line-1", "CW4-0002", "CW4", "cw4-production", "production", "failed", "2026-12-01",
                  "1", "1990.5", "1500000.0", "0.0003", "13.0", "fail", R"(["z_out_ohms 1.5e6 above the limit 1.3e6"])"},
                 {std::to_string(run3), "line-1", "CW4-0001", "CW4", "cw4-soak", "soak", "passed", "2026-12-01", "3",
                  "1999.0", "1220000.0", "0.0003", "12.75", "pass", "[]"},
                 {std::to_string(run4), "line-1", "CW4-0002", "CW4", "cw4-production", "production", "aborted", "NULL", "0",
                  "NULL", "NULL", "NULL", "NULL", "NULL", "NULL"}});
    REQUIRE(select(file, "SELECT run_id FROM run_summary WHERE day = '2026-12-01' AND verdict = 'fail'") ==
            Rows{{std::to_string(run2)}});
  }
  SECTION("unit_history: every run of a serial, oldest first") {
    REQUIRE(select(file, "SELECT serial, run_id, kind, state, queued_at, plan_name, v_oc_volts, verdict "
                         "FROM unit_history WHERE serial = 'CW4-0001'") ==
            Rows{{"CW4-0001", std::to_string(run1), "production", "passed", "2026-12-01T21:15:14.123Z", "cw4-production",
                  "2000.25", "pass"},
                 {"CW4-0001", std::to_string(run3), "soak", "passed", "2026-12-01T22:15:14.123Z", "cw4-soak", "1999.0", "pass"}});
    REQUIRE(select(file, "SELECT run_id, state FROM unit_history WHERE serial = 'CW4-0002'") ==
            Rows{{std::to_string(run2), "failed"}, {std::to_string(run4), "aborted"}});
  }
  SECTION("iv_curve: load current (measured, else set) against DC volts and ripple") {
    // The views count sweeps and steps from 1 (schema/004_views_count_from_one.sql).
    REQUIRE(select(file, "SELECT sweep, step, load_amps, dc_volts, ripple_rms_volts, ripple_pp_volts "
                         "FROM iv_curve WHERE run_id = " + std::to_string(run1) + " ORDER BY step") ==
            Rows{{"1", "1", "0.0", "2000.0", "0.5", "2.0"},
                 {"1", "2", "0.0001001", "1880.0", "1.5", "5.0"},
                 {"1", "3", "0.0002002", "1760.0", "2.5", "9.0"},
                 {"1", "4", "0.0003003", "1640.0", "3.5", "12.0"}});
  }
  SECTION("soak_trend: per sweep of a soak run, time into the run and the figures") {
    REQUIRE(select(file, "SELECT run_id, serial, sweep, sweep_started_at, elapsed_s, v_oc_volts, z_out_ohms, "
                         "ripple_rated_pp_volts, verdict FROM soak_trend ORDER BY sweep") ==
            Rows{{std::to_string(run3), "CW4-0001", "1", "2026-12-01T22:15:19.123Z", "0.0", "2000.0", "1200000.0", "12.5", "NULL"},
                 {std::to_string(run3), "CW4-0001", "2", "2026-12-01T22:25:19.123Z", "600.0", "1999.5", "1210000.0", "12.625", "NULL"},
                 {std::to_string(run3), "CW4-0001", "3", "2026-12-01T22:35:19.123Z", "1200.0", "1999.0", "1220000.0", "12.75", "pass"}});
  }
}
