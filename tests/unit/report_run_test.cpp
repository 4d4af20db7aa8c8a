// RunRecord, the text and JSON reports and the export rows, on a database written here with
// StoreWriter (tests/support/report_database.h): the report must show exactly what was stored,
// and its model comparison must equal the Cockcroft–Walton formulas evaluated here.
#include <catch2/catch.hpp>

#include <fmt/format.h>

#include <cmath>
#include <cstdlib>
#include <ctime>

#include "tests/support/temp_dir.h"
#include "daemon/report/model_comparison.h"
#include "daemon/report/run_export.h"
#include "daemon/report/run_record.h"
#include "daemon/report/run_report.h"
#include "daemon/store/store_error.h"
#include "daemon/text/si_text.h"
#include "daemon/text/time_text.h"
#include "tests/support/report_database.h"

using namespace zout;
using namespace zout::test;

namespace {

// Kuffel, Zaengl & Kuffel, High Voltage Engineering: Fundamentals, §2.2, written out here
// rather than taken from daemon/analysis: for an n-stage cascade at load current I,
//   ΔV = (I/fC)(2n³/3 + n²/2 − n/6),  δV = (I/fC)·n(n+1)/2,  V_ideal = 2n·V_pk.
double book_sag_volts(double amps) {
  const double n = report_stages;
  return amps / (report_frequency_hz * report_capacitance_farads) * (2 * n * n * n / 3 + n * n / 2 - n / 6);
}
double book_ripple_pp_volts(double amps) {
  const double n = report_stages;
  return amps / (report_frequency_hz * report_capacitance_farads) * n * (n + 1) / 2;
}
double book_source_ohms() { return book_sag_volts(1.0); }
double book_ideal_volts() { return 2.0 * report_stages * report_amplitude_volts_peak; }

bool contains(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

}  // namespace

TEST_CASE("a run record holds exactly the run, plan, points, readings, results and events stored", "[report]") {
  TempDir dir("zout-report-record");
  const ReportDatabase db = make_report_database(dir.path);
  const report::RunRecord r = report::load_run_record(db.file, db.production_run);

  CHECK(r.header.run_id == db.production_run);
  CHECK(r.header.serial == "CW5-0042");
  CHECK(r.header.model == "CW5");
  CHECK(r.header.station == "line-2");
  CHECK(r.header.plan_name == "cw5-production");
  CHECK(r.header.kind == store::RunKind::production);
  CHECK(r.header.state == store::RunState::failed);
  CHECK(r.header.operator_name == "ana");
  CHECK(r.header.note == "first article");
  CHECK(r.header.slot == 3);
  CHECK(store::format_utc(*r.header.started_at) == "2026-12-01T21:15:14.123Z");
  CHECK(store::format_utc(*r.header.ended_at) == "2026-12-01T21:16:17.123Z");  // 2 + 6·10 + 1 s later
  CHECK(report::run_duration_s(r.header) == Approx(63.0).margin(1e-9));
  CHECK(r.header.sweeps == 1);

  REQUIRE(r.plan.has_value());
  CHECK(r.plan_error.empty());
  CHECK(r.plan->dut.stages == 5);
  CHECK(r.plan_document["impedance"]["operating_amps"].get<double>() == 1e-5);

  const auto& expected = production_points();
  REQUIRE(r.points.size() == expected.size());
  for (std::size_t i = 0; i < expected.size(); ++i) {
    const auto& stored = r.points[i];
    const auto& p = stored.point;
    INFO("point " << i);
    CHECK(stored.sweep == 1);  // sweeps and steps count from 1
    CHECK(stored.step == static_cast<int>(i) + 1);
    CHECK(p.set_load_amps == expected[i].set_amps);
    CHECK(!p.set_load_ohms);
    CHECK(p.measured_load_amps == expected[i].measured_amps);
    CHECK(stored.load_amps == expected[i].measured_amps);
    CHECK(p.dc_volts == expected[i].dc_volts);
    CHECK(p.ripple_pp_volts == expected[i].ripple_pp_volts);
    CHECK(p.settle_s == expected[i].settle_s);
    CHECK(p.settled == (i != 4));
    REQUIRE(stored.readings.size() == 5);
    CHECK(stored.readings[0].reading.kind == "dc_volts");
    CHECK(stored.readings[0].reading.value == expected[i].dc_volts - 0.125);
    CHECK(stored.readings[2].reading.value == expected[i].dc_volts + 0.125);
    CHECK(stored.readings[4].instrument_role == "load");
    CHECK(stored.readings[4].reading.kind == "load_amps");
    CHECK(stored.readings[4].reading.value == expected[i].measured_amps);
    for (std::size_t k = 0; k < stored.readings.size(); ++k) CHECK(stored.readings[k].seq == static_cast<int>(k));
  }
  CHECK(r.reading_count() == 30);

  REQUIRE(r.sweep_results().size() == 1);
  const auto& x = *r.sweep_results()[0];
  CHECK(x.fit_points == 4);
  CHECK(x.v_oc_volts == 392.4);
  CHECK(x.z_out_ohms == 119250.0);
  CHECK(x.z_out_stderr_ohms == 1530.0);
  CHECK(x.z_chord_ohms == 105800.0);
  CHECK(x.cascade_r_ohms == 104200.0);
  CHECK(x.cascade_r_stderr_ohms == 870.0);
  CHECK(x.effective_capacitance_farads == 45.59e-9);
  CHECK(x.diode_drop_volts == 0.76);
  CHECK(x.diode_m == 1.9);
  CHECK(x.diode_i0_amps == 3.2e-6);
  CHECK(x.rated_load_amps == 1e-3);
  CHECK(x.ripple_rated_pp_volts == 16.6);
  CHECK(!x.model_v_oc_volts);
  CHECK(!x.v_oc_drift_volts_per_hour);
  CHECK(x.verdict == store::Verdict::fail);
  CHECK(x.verdict_reasons == std::vector<std::string>{"z_out_ohms 119250 is above z_out_max_ohms 115000"});

  REQUIRE(r.events.size() == 3);
  CHECK(r.events[0].event.code == "reconnect");
  CHECK(r.events[0].event.level == store::EventLevel::warning);
  CHECK(r.events[2].event.message == "-222,\"Data out of range\"");
}

TEST_CASE("a soak run record carries its trend, hours apart", "[report]") {
  TempDir dir("zout-report-record");
  const ReportDatabase db = make_report_database(dir.path);
  const report::RunRecord r = report::load_run_record(db.file, db.soak_run);
  CHECK(r.header.kind == store::RunKind::soak);
  CHECK(!r.header.slot);
  CHECK(r.points.size() == 16);
  REQUIRE(r.sweeps.size() == 8);
  REQUIRE(r.sweep_results().size() == 8);
  for (std::size_t k = 0; k < 8; ++k) {
    INFO("sweep " << k);
    const int i = static_cast<int>(k);
    CHECK(r.sweeps[k].sweep == i + 1);
    CHECK(r.sweeps[k].elapsed_s == Approx(1800.0 * i).margin(1e-3));
    CHECK(r.sweeps[k].result->v_oc_volts == soak_v_oc(i));
    CHECK(r.sweeps[k].result->z_out_ohms == soak_z_out(i));
    CHECK(r.sweeps[k].result->ripple_rated_pp_volts == soak_ripple(i));
  }
  CHECK(r.latest_result()->sweep == 8);
  CHECK(r.points_of_sweep(4).size() == 2);
  CHECK(r.plan->repeat.baseline_sweeps == 3);
}

TEST_CASE("a missing run or database is a clear error naming the file", "[report]") {
  TempDir dir("zout-report-record");
  const ReportDatabase db = make_report_database(dir.path);
  REQUIRE_THROWS_MATCHES(report::load_run_record(db.file, 42), report::RunNotFound,
                         Catch::Message("no run 42 in " + db.file.string()));
  REQUIRE_THROWS_WITH(report::load_run_record(dir.path / "absent.db", 1),
                      Catch::Contains((dir.path / "absent.db").string()) && Catch::Contains("no such file"));
}

TEST_CASE("the text report shows the figures, the model comparison, points, verdict and events", "[report]") {
  TempDir dir("zout-report-text");
  const ReportDatabase db = make_report_database(dir.path);
  const std::string text =
      report::render_text_report(report::load_run_record(db.file, db.production_run), text::TimeZoneChoice::utc);
  INFO(text);
  CHECK(contains(text, fmt::format("Run {}: unit CW5-0042 (CW5), slot 3", db.production_run)));
  CHECK(contains(text, "cw5-production"));
  CHECK(contains(text, "line-2"));
  CHECK(contains(text, "duration  1:03\n"));  // 63 s, as zout runs shows it
  // Figures with SI prefixes and units on both sides of the ±, 4 significant digits.
  CHECK(contains(text, "V_oc                      392.4 V\n"));
  CHECK(contains(text, "119.3 kΩ ± 1.5 kΩ (4 fit points)"));
  CHECK(contains(text, "104.2 kΩ ± 870 Ω"));
  CHECK(contains(text, "chord Z to rated load     105.8 kΩ"));
  CHECK(contains(text, "effective C               45.59 nF"));
  CHECK(contains(text, "diode drop                760.0 mV"));
  CHECK(contains(text, "rated load                1.000 mA"));
  CHECK(contains(text, "ripple pp at rated load   16.60 V"));
  const std::string before_verdict = text.substr(0, text.find("Verdict:"));  // the reasons are as stored
  CHECK(!contains(before_verdict, "119250"));
  CHECK(!contains(before_verdict, "ohm"));
  // The model, from the book's formulas: 400 V, 101064 Ω, 101.064 V and 15.9574 V at 1 mA.
  CHECK(contains(text, "(n = 5, C = 47.00 nF, f = 20.00 kHz, V_pk = 40.00 V)"));
  CHECK(contains(text, text::si_text(book_ideal_volts(), "V", 4)));
  CHECK(contains(text, text::si_text(book_source_ohms(), "Ω", 4)));
  CHECK(contains(text, "101.1 kΩ"));  // 95/(20 kHz · 47 nF) = 101 063.8 Ω
  CHECK(contains(text, text::si_text(book_sag_volts(1e-3), "V", 4)));
  CHECK(contains(text, text::si_text(book_ripple_pp_volts(1e-3), "V", 4)));
  CHECK(contains(text, "15.96 V"));
  CHECK(contains(text, text::si_text(392.4 - 286.5, "V", 4)));  // measured droop
  CHECK(contains(text, fmt::format("{:+.2f} %", 100.0 * (392.4 - 400.0) / 400.0)));
  CHECK(contains(text, "Verdict: fail"));
  CHECK(contains(text, "  - z_out_ohms 119250 is above z_out_max_ohms 115000"));  // as stored
  CHECK(contains(text, "Warnings and errors (2)"));
  CHECK(contains(text, "reconnected after a timeout"));
  CHECK(contains(text, "Data out of range"));
  CHECK(!contains(text, "step 1 settled"));  // info events stay out
  CHECK(contains(text, "Points (6)"));
  CHECK(contains(text, "339.1 V"));
  CHECK(contains(text, "10.00 µA"));  // a set load
  CHECK(contains(text, "NO"));        // the unsettled step
  CHECK(!contains(text, "Drift"));
  // Times in UTC with the Z, to the second: queued/started, computed, events.
  CHECK(contains(text, "started   2026-12-01T21:15:14Z\n"));
  CHECK(contains(text, "ended     2026-12-01T21:16:17Z\n"));
  CHECK(contains(text, "2026-12-01T21:15:26Z  warning  meter  reconnect"));
  CHECK(!contains(text, ".123Z"));
}

TEST_CASE("the text report shows times in local time with the offset when asked", "[report]") {
  TempDir dir("zout-report-text");
  const ReportDatabase db = make_report_database(dir.path);
  const auto record = report::load_run_record(db.file, db.production_run);
  const char* saved = std::getenv("TZ");
  const std::string old_zone = saved ? saved : "";
  ::setenv("TZ", "NST+3:30", 1);  // 3 h 30 min behind UTC, no summer time
  ::tzset();
  const std::string text = report::render_text_report(record, text::TimeZoneChoice::local);
  if (saved) {
    ::setenv("TZ", old_zone.c_str(), 1);
  } else {
    ::unsetenv("TZ");
  }
  ::tzset();
  INFO(text);
  CHECK(contains(text, "started   2026-12-01T17:45:14-03:30\n"));
  CHECK(contains(text, "2026-12-01T17:45:26-03:30  warning  meter  reconnect"));
  CHECK(!contains(text, "21:15:14"));
}

TEST_CASE("the JSON report's model comparison equals the book's formulas", "[report]") {
  TempDir dir("zout-report-json");
  const ReportDatabase db = make_report_database(dir.path);
  const auto json = report::render_json_report(report::load_run_record(db.file, db.production_run));
  CHECK(json["run"]["serial"] == "CW5-0042");
  CHECK(json["run"]["slot"] == 3);
  CHECK(json["figures"]["z_out_ohms"].get<double>() == 119250.0);
  CHECK(json["verdict"]["verdict"] == "fail");
  CHECK(json["points"].size() == 6);
  CHECK(json["drift"].is_null());
  CHECK(json["events"].size() == 2);

  const auto& rows = json["model_comparison"];
  REQUIRE(rows.size() == 4);
  const double measured[] = {392.4, 119250.0, 392.4 - 286.5, 16.6};
  const double model[] = {book_ideal_volts(), book_source_ohms(), book_sag_volts(1e-3), book_ripple_pp_volts(1e-3)};
  const char* keys[] = {"v_oc_volts", "z_out_ohms", "droop_rated_volts", "ripple_rated_pp_volts"};
  for (int i = 0; i < 4; ++i) {
    INFO(keys[i]);
    CHECK(rows[i]["quantity"] == keys[i]);
    CHECK(rows[i]["measured"].get<double>() == Approx(measured[i]).epsilon(1e-12));
    CHECK(rows[i]["model"].get<double>() == Approx(model[i]).epsilon(1e-12));
    CHECK(rows[i]["difference_percent"].get<double>() ==
          Approx(100.0 * (measured[i] - model[i]) / model[i]).epsilon(1e-9));
  }
  // For this plan: 2n³/3 + n²/2 − n/6 = 95 and n(n+1)/2 = 15 (n = 5).
  CHECK(book_source_ohms() == Approx(95.0 / (20000.0 * 47e-9)));
  CHECK(book_ripple_pp_volts(1e-3) == Approx(15.0 * 1e-3 / (20000.0 * 47e-9)));
}

TEST_CASE("a soak report shows the drift slopes with their standard errors", "[report]") {
  TempDir dir("zout-report-soak");
  const ReportDatabase db = make_report_database(dir.path);
  const auto record = report::load_run_record(db.file, db.soak_run);
  const std::string text = report::render_text_report(record, text::TimeZoneChoice::utc);
  INFO(text);
  CHECK(contains(text, "Drift over 8 sweeps"));
  CHECK(contains(text, "V_oc drift    -500.0 mV/h ± 40.0 mV/h"));
  CHECK(contains(text, "Z_out drift   200.0 Ω/h ± 15.0 Ω/h"));
  CHECK(contains(text, "ripple drift  20.00 mV/h ± 10.00 mV/h"));
  CHECK(contains(text, "note      —\n"));  // none given: the missing-value mark
  CHECK(contains(text, "Verdict: pass"));
  const auto json = report::render_json_report(record);
  CHECK(json["drift"]["z_out_ohms_per_hour"].get<double>() == 200.0);
  CHECK(json["drift"]["v_oc_stderr_volts_per_hour"].get<double>() == 0.04);
  CHECK(json["figures"]["sweep"] == 8);  // the eighth sweep, counted from 1
  CHECK(json["run"]["note"] == "");
  CHECK(json["run"]["started_at"] == "2026-12-01T21:16:54.123Z");  // the store's text, unchanged
}

TEST_CASE("export rows carry every reading with its point, in order", "[report]") {
  TempDir dir("zout-report-export");
  const ReportDatabase db = make_report_database(dir.path);
  const auto record = report::load_run_record(db.file, db.production_run);
  const auto rows = report::export_reading_rows(record);
  const auto& columns = report::export_csv_columns();
  REQUIRE(rows.size() == 30);
  for (const auto& row : rows) REQUIRE(row.size() == columns.size());
  const auto column = [&](const std::string& name) {
    return static_cast<std::size_t>(std::find(columns.begin(), columns.end(), name) - columns.begin());
  };
  // Row 7: the second point (step 2, counted from 1), its third reading.
  const auto& row = rows[7];
  CHECK(row[column("run_id")] == std::to_string(db.production_run));
  CHECK(row[column("step")] == "2");
  CHECK(row[column("reading_seq")] == "2");
  CHECK(std::stod(row[column("reading_value")]) == 391.2 + 0.125);
  CHECK(std::stod(row[column("measured_load_amps")]) == 1.0013e-5);
  CHECK(row[column("set_load_ohms")].empty());
  CHECK(row[column("settled")] == "1");
  const auto json = report::export_json(record);
  CHECK(json["points"][5]["readings"][4]["value"].get<double>() == 1.00033e-3);
  CHECK(json["plan"]["dut"]["stages"] == 5);
  CHECK(json["sweep_results"][0]["diode_i0_amps"].get<double>() == 3.2e-6);
}
