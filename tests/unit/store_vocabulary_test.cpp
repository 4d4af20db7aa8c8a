// The store's one-place definitions against the schema they describe: the sweep figure table
// against sweep_result's columns, the run-state words against run.state's CHECK, and the times
// the readers parse back.
#include <catch2/catch.hpp>

#include <nlohmann/json.hpp>

#include <set>

#include "daemon/store/record_json.h"
#include "daemon/store/run_reader.h"
#include "daemon/store/run_state.h"
#include "daemon/store/store_error.h"
#include "daemon/store/store_writer.h"
#include "daemon/store/sweep_figures.h"
#include "tests/support/report_database.h"
#include "tests/support/temp_dir.h"

using namespace zout::store;
using zout::test::TempDir;

TEST_CASE("the sweep figure table names every REAL column of sweep_result, and only those", "[store][vocabulary]") {
  TempDir dir("zout-store-vocabulary");
  StoreWriter writer(dir.path / "z.db");
  std::set<std::string> real_columns;
  auto info = writer.database().prepare("SELECT name, type FROM pragma_table_info('sweep_result')");
  while (info.step()) {
    if (info.column_text(1) == "REAL") real_columns.insert(info.column_text(0));
  }
  std::set<std::string> listed;
  for (const auto& figure : sweep_figures) {
    CHECK(real_columns.count(std::string(figure.column)) == 1);
    listed.insert(std::string(figure.column));
    // The unit a reader sees matches the SI suffix of the column name (DEVELOPERS.md, "Names and units").
    const std::string column(figure.column);
    const auto ends = [&column](const std::string& suffix) {
      return column.size() >= suffix.size() && column.compare(column.size() - suffix.size(), suffix.size(), suffix) == 0;
    };
    if (ends("_volts_per_hour")) CHECK(figure.unit == "V/h");
    else if (ends("_ohms_per_hour")) CHECK(figure.unit == "Ω/h");
    else if (ends("_volts")) CHECK(figure.unit == "V");
    else if (ends("_ohms")) CHECK(figure.unit == "Ω");
    else if (ends("_amps")) CHECK(figure.unit == "A");
    else if (ends("_farads")) CHECK(figure.unit == "F");
    else CHECK(figure.unit.empty());
  }
  CHECK(listed == real_columns);
  CHECK(listed.size() == sweep_figures.size());  // no column listed twice
  CHECK(sweep_figure_named("z_out_ohms")->unit == "Ω");
  CHECK(sweep_figure_named("no_such_figure") == nullptr);
}

TEST_CASE("every run-state word is one the schema accepts, final exactly when the run has ended", "[store][vocabulary]") {
  TempDir dir("zout-store-vocabulary");
  StoreWriter writer(dir.path / "z.db");
  const auto at = zout::test::report_time;
  const auto station = writer.record_station("st", at(0));
  const auto plan = writer.record_plan("p", "{}", at(0));
  const auto unit = writer.record_unit("U-1", "", at(0));
  RunReader reader(writer.database());
  for (const auto& entry : run_state_words) {
    INFO(entry.word);
    CHECK(run_state_named(entry.word) == entry.state);
    CHECK(to_string(entry.state) == entry.word);
    CHECK(is_final_state_word(entry.word) == entry.final);
    const auto run = writer.create_run({unit, plan, station, RunKind::production, RunState::queued, at(1), "", ""});
    if (entry.state != RunState::queued) {
      // Every final state is reachable from running (the schema's trigger), running from queued.
      if (entry.state != RunState::running) writer.set_run_state(run, RunState::running, at(2));
      writer.set_run_state(run, entry.state, at(3));
    }
    const auto summary = reader.run(run);
    REQUIRE(summary);
    CHECK(summary->state == entry.state);
    CHECK(summary->ended_at.has_value() == entry.final);  // the schema: ended_at set exactly when final
  }
  CHECK_FALSE(run_state_named("finished"));
  CHECK_FALSE(is_final_state_word("finished"));
  CHECK_THROWS_AS(writer.database().exec("UPDATE run SET state = 'finished' WHERE run_id = 1"), StoreError);
  CHECK(run_state_word_list() ==
        std::vector<std::string>{"queued", "running", "passed", "failed", "aborted", "interrupted", "error"});
}

TEST_CASE("a sweep result goes in and comes back through the figure table, every figure and its JSON", "[store][vocabulary]") {
  TempDir dir("zout-store-vocabulary");
  const auto db = zout::test::make_report_database(dir.path);
  RunReader reader(db.file);
  const auto history = reader.history(db.production_run);
  REQUIRE(history);
  REQUIRE(history->sweeps.size() == 1);
  REQUIRE(history->sweeps[0].result);
  const SweepResultRecord& r = *history->sweeps[0].result;
  // The values make_report_database wrote (tests/support/report_database.h).
  CHECK(r.sweep == 1);
  CHECK(format_utc(r.computed_at) == format_utc(zout::test::report_time(62.5)));
  CHECK(r.fit_points == 4);
  CHECK(r.v_oc_volts == 392.4);
  CHECK(r.z_out_ohms == 119250.0);
  CHECK(r.z_out_stderr_ohms == 1530.0);
  CHECK(r.diode_i0_amps == 3.2e-6);
  CHECK_FALSE(r.model_v_oc_volts);
  CHECK_FALSE(r.v_oc_drift_volts_per_hour);
  CHECK(r.verdict == Verdict::fail);
  CHECK(r.verdict_reasons == std::vector<std::string>{"z_out_ohms 119250 is above z_out_max_ohms 115000"});

  const nlohmann::json j = sweep_result_json(r);
  for (const auto& figure : sweep_figures) {
    INFO(figure.column);
    const auto& value = r.*figure.member;
    REQUIRE(j.contains(std::string(figure.column)));
    if (value) {
      CHECK(j.at(std::string(figure.column)).get<double>() == *value);
    } else {
      CHECK(j.at(std::string(figure.column)).is_null());
    }
  }
  CHECK(j.at("sweep") == 1);
  CHECK(j.at("verdict") == "fail");
  CHECK(j.at("computed_at") == format_utc(r.computed_at));
  CHECK(j.size() == sweep_figures.size() + 5);

  // The run's summary carries the same latest result, flat beside the run's fields.
  const auto summary = reader.run(db.production_run);
  REQUIRE(summary);
  const nlohmann::json run = run_summary_json(*summary);
  CHECK(run.at("state") == "failed");
  CHECK(run.at("final") == true);
  CHECK(run.at("slot") == 3);
  CHECK(run.at("note") == "first article");
  CHECK(run.at("result_sweep") == 1);
  CHECK(run.at("z_out_ohms").get<double>() == 119250.0);
  CHECK(run.at("verdict_reasons").size() == 1);
}

TEST_CASE("RunReader gives a run's history: points with readings numbered from 1, soak sweeps, events", "[store]") {
  TempDir dir("zout-store-reader");
  const auto db = zout::test::make_report_database(dir.path);
  RunReader reader(db.file);
  const auto production = reader.history(db.production_run);
  REQUIRE(production);
  REQUIRE(production->points.size() == zout::test::production_points().size());
  for (std::size_t i = 0; i < production->points.size(); ++i) {
    const auto& p = production->points[i];
    const auto& written = zout::test::production_points()[i];
    CHECK(p.sweep == 1);
    CHECK(p.step == static_cast<int>(i) + 1);
    CHECK(p.point.step_index == static_cast<int>(i));
    CHECK(p.point.dc_volts == written.dc_volts);
    CHECK(p.load_amps == written.measured_amps);  // measured current preferred to the set one
    REQUIRE(p.readings.size() == 5);
    CHECK(p.readings[0].seq == 0);
    CHECK(p.readings[0].instrument_role == "meter");
    CHECK(p.readings[4].instrument_role == "load");
    CHECK(p.readings[4].reading.kind == "load_amps");
  }
  CHECK(production->points[4].point.settled == false);
  REQUIRE(production->events.size() == 3);
  CHECK(production->events[2].event.level == EventLevel::error);
  CHECK(production->events[2].event.code == "scpi.error");

  const auto soak = reader.history(db.soak_run);
  REQUIRE(soak);
  REQUIRE(static_cast<int>(soak->sweeps.size()) == db.soak_sweeps);
  CHECK(soak->sweeps[3].sweep == 4);
  CHECK(soak->sweeps[3].elapsed_s == Approx(3 * 1800.0));
  CHECK(soak->summary.latest_result->sweep == db.soak_sweeps);
  CHECK(soak->summary.kind == RunKind::soak);

  RunFilter failed;
  failed.state = RunState::failed;
  const auto runs = reader.runs(failed);
  REQUIRE(runs.size() == 1);
  CHECK(runs[0].run_id == db.production_run);
  CHECK(reader.runs(RunFilter{}).front().run_id == db.soak_run);  // newest first
  CHECK(reader.point_count(db.soak_run) == 2 * db.soak_sweeps);
  CHECK_FALSE(reader.run(999));
  CHECK_FALSE(reader.history(999));
}

TEST_CASE("times read back are exactly the times written, other text is refused", "[store]") {
  for (const char* text : {"2026-12-01T21:15:14.123Z", "1970-01-01T00:00:00.000Z", "2028-02-29T23:59:59.999Z"}) {
    CHECK(format_utc(parse_utc(text)) == text);
  }
  for (const char* text : {"2026-12-01 21:15:14.123Z", "2026-12-01T21:15:14Z", "2026-02-30T00:00:00.000Z",
                           "2026-12-01T24:00:00.000Z", "2026-12-01T21:15:14.123+01:00", ""}) {
    INFO(text);
    CHECK_THROWS_AS(parse_utc(text), std::invalid_argument);
  }
}
