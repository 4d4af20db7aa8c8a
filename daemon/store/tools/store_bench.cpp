// zout-store-bench: the measuring half of scripts/bench-store and scripts/bench-history.
//
//   zout-store-bench commits DB POINTS        durable point commits through StoreWriter
//   zout-store-bench raw-sql DB FILE POINTS   prepares DB as `commits` does, and writes the
//                                             same point rows as SQL for the sqlite3 shell
//   zout-store-bench history DB [DAYS]        builds a synthetic year of one station
//   zout-store-bench time-history DB [REPEAT] times unit_history and run_summary (median ms)
//
// The data is synthetic (invented for the benchmark only): every figure is a smooth function
// of the row's index, so both commit paths write identical rows.

#include <fmt/format.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <exception>
#include <filesystem>
#include <fstream>
#include <random>
#include <string>
#include <vector>

#include "daemon/store/database.h"
#include "daemon/store/read_only_query.h"
#include "daemon/store/store_error.h"
#include "daemon/store/store_writer.h"
#include "daemon/store/transaction.h"
#include "daemon/store/utc_time.h"

using namespace zout::store;
using Clock = std::chrono::steady_clock;

namespace {

constexpr int readings_per_point = 6;
const TimePoint epoch = std::chrono::sys_days{std::chrono::year{2026} / 1 / 1};

double seconds_since(Clock::time_point start) { return std::chrono::duration<double>(Clock::now() - start).count(); }

// Point i of the commit benchmark, and its readings, as plain numbers.
struct BenchPoint {
  double amps, volts, rms, pp;
  TimePoint at;
};

BenchPoint bench_point(long i) {
  const double amps = 50e-6 * static_cast<double>(i % 20);
  const double volts = 2000.0 - 1.2e6 * amps + 0.001 * static_cast<double>(i % 7);
  const double rms = 0.5 + 1e4 * amps;
  return {amps, volts, rms, rms * 3.4641016151377544, epoch + std::chrono::milliseconds(100 * i)};
}

struct BenchReading {
  std::int64_t instrument_id;
  const char* kind;
  double value;
};

std::vector<BenchReading> bench_readings(const BenchPoint& p) {
  return {{2, "settle_dc_volts", p.volts + 0.3}, {2, "settle_dc_volts", p.volts + 0.01}, {2, "dc_volts", p.volts},
          {2, "ac_rms_volts", p.rms},           {3, "load_amps", p.amps},              {1, "source_volts", 500.0}};
}

// Station 1, instruments 1-3 (source, meter, load), plan 1, unit 1, run 1, sweep 1.
void write_parents(StoreWriter& writer) {
  const auto station = writer.record_station("bench", epoch);
  writer.record_instrument({station, "source", "tcp://127.0.0.1:5601", "Sim", "FG-1", "S1", "1.0"}, epoch);
  writer.record_instrument({station, "meter", "tcp://127.0.0.1:5602", "Sim", "DMM-1", "M1", "1.0"}, epoch);
  writer.record_instrument({station, "load", "tcp://127.0.0.1:5603", "Sim", "EL-1", "L1", "1.0"}, epoch);
  const auto plan = writer.record_plan("bench", R"({"load":{"mode":"current"}})", epoch);
  const auto unit = writer.record_unit("BENCH-1", "CW4", epoch);
  const auto run = writer.create_run({unit, plan, station, RunKind::soak, RunState::running, epoch, "bench", ""});
  writer.start_sweep(run, 0, epoch);
}

int commits(const std::string& path, long points) {
  StoreWriter writer(path);
  write_parents(writer);
  const auto start = Clock::now();
  for (long i = 0; i < points; ++i) {
    const BenchPoint p = bench_point(i);
    PointRecord point;
    point.sweep_id = 1;
    point.step_index = static_cast<int>(i);
    point.set_load_amps = p.amps;
    point.measured_load_amps = p.amps;
    point.dc_volts = p.volts;
    point.ripple_rms_volts = p.rms;
    point.ripple_pp_volts = p.pp;
    point.settle_s = 0.25;
    point.step_started_at = p.at;
    point.taken_at = p.at;
    std::vector<ReadingRecord> readings;
    for (const auto& r : bench_readings(p)) readings.push_back({r.instrument_id, r.kind, r.value, p.at});
    writer.commit_point(point, readings);
  }
  const double seconds = seconds_since(start);
  fmt::print("zout StoreWriter   {} points x {} readings  {:.2f} s  {:.0f} points/s\n", points, readings_per_point,
             seconds, static_cast<double>(points) / seconds);
  return 0;
}

int raw_sql(const std::string& db_path, const std::string& sql_path, long points) {
  {
    StoreWriter writer(db_path);  // the same schema and parents as `commits` starts from
    write_parents(writer);
  }
  std::FILE* out = std::fopen(sql_path.c_str(), "w");
  if (out == nullptr) throw std::runtime_error("cannot write " + sql_path);
  // The writer's connection settings (see store_writer.h).
  fmt::print(out, "PRAGMA journal_mode = WAL;\nPRAGMA synchronous = FULL;\nPRAGMA foreign_keys = ON;\nPRAGMA busy_timeout = 5000;\n");
  for (long i = 0; i < points; ++i) {
    const BenchPoint p = bench_point(i);
    const std::string at = format_utc(p.at);
    fmt::print(out,
               "BEGIN IMMEDIATE;\nINSERT INTO point (point_id, sweep_id, step_index, set_load_amps, set_load_ohms, "
               "measured_load_amps, dc_volts, ripple_rms_volts, ripple_pp_volts, settle_s, settled, step_started_at, "
               "taken_at) VALUES ({}, 1, {}, {:.17g}, NULL, {:.17g}, {:.17g}, {:.17g}, {:.17g}, 0.25, 1, '{}', '{}');\n",
               i + 1, i, p.amps, p.amps, p.volts, p.rms, p.pp, at, at);
    int seq = 0;
    for (const auto& r : bench_readings(p)) {
      fmt::print(out, "INSERT INTO reading (point_id, seq, instrument_id, kind, value, taken_at) VALUES ({}, {}, {}, '{}', {:.17g}, '{}');\n",
                 i + 1, seq++, r.instrument_id, r.kind, r.value, at);
    }
    fmt::print(out, "COMMIT;\n");
  }
  std::fclose(out);
  return 0;
}

// A synthetic year of one station: each day 400 production runs (one sweep of 20 points,
// 3 s a point, from 06:00), 3 % of them retests of an earlier unit; then from 13:00 a 17-hour
// soak of one of the day's units, a sweep of 20 points every minute. Six readings a point.
int history(const std::string& path, int days) {
  constexpr int production_runs_per_day = 400;
  constexpr int soak_sweeps_per_day = 1020;
  constexpr int points_per_sweep = 20;
  std::filesystem::remove(path);
  std::filesystem::remove(path + "-wal");
  std::filesystem::remove(path + "-shm");
  { StoreWriter writer(path); write_parents(writer); }  // schema, station, instruments, plans
  Database db(path, Database::Access::read_write_create);
  // Bulk load of rows this program makes well-formed: durability, key and CHECK evaluation are
  // not what is measured here (SQLite documentation: PRAGMA ignore_check_constraints).
  db.exec("PRAGMA journal_mode = OFF; PRAGMA synchronous = OFF; PRAGMA foreign_keys = OFF; "
          "PRAGMA ignore_check_constraints = ON; PRAGMA cache_size = -262144");
  db.exec("INSERT INTO plan (name, content_sha256, content_json, recorded_at) VALUES ('soak-17h', "
          "'00000000000000000000000000000000000000000000000000000000000000aa', '{}', '2026-01-01T00:00:00.000Z')");
  std::mt19937_64 random(20261201);
  std::uniform_real_distribution<double> jitter(-1.0, 1.0);
  long points = 0;
  long serial_count = 0;
  const auto start = Clock::now();
  auto at_s = [](double s) { return format_utc(epoch + std::chrono::milliseconds(static_cast<long long>(s * 1000.0))); };

  const auto add_sweep = [&](std::int64_t run_id, int index, double t0, double unit_z) {
    auto sweep = db.cached("INSERT INTO sweep (run_id, sweep_index, started_at, ended_at) VALUES (:run, :index, :at, :end)");
    sweep->bind_int(":run", run_id).bind_int(":index", index).bind_text(":at", at_s(t0)).bind_text(":end", at_s(t0 + 3.0 * points_per_sweep));
    sweep->run();
    const std::int64_t sweep_id = db.last_insert_rowid();
    for (int step = 0; step < points_per_sweep; ++step) {
      const double t = t0 + 3.0 * step;
      const double amps = 50e-6 * step;
      const double volts = 2000.0 - unit_z * amps + 0.01 * jitter(random);
      const double rms = 0.5 + 1e4 * amps;
      auto point = db.cached(
          "INSERT INTO point (sweep_id, step_index, set_load_amps, measured_load_amps, dc_volts, ripple_rms_volts, "
          "ripple_pp_volts, settle_s, settled, step_started_at, taken_at) VALUES (:sweep, :step, :set, :measured, "
          ":volts, :rms, :pp, 1.5, 1, :start, :taken)");
      point->bind_int(":sweep", sweep_id).bind_int(":step", step).bind_real(":set", amps).bind_real(":measured", amps * 1.001)
          .bind_real(":volts", volts).bind_real(":rms", rms).bind_real(":pp", rms * 3.4641016151377544)
          .bind_text(":start", at_s(t)).bind_text(":taken", at_s(t + 1.5));
      point->run();
      const std::int64_t point_id = db.last_insert_rowid();
      const BenchReading readings[readings_per_point] = {{2, "settle_dc_volts", volts + 0.3}, {2, "settle_dc_volts", volts + 0.01},
                                                         {2, "dc_volts", volts}, {2, "ac_rms_volts", rms},
                                                         {3, "load_amps", amps * 1.001}, {3, "load_volts", volts}};
      auto reading = db.cached("INSERT INTO reading (point_id, seq, instrument_id, kind, value, taken_at) VALUES (:point, :seq, :instrument, :kind, :value, :at)");
      for (int seq = 0; seq < readings_per_point; ++seq) {
        reading->bind_int(":point", point_id).bind_int(":seq", seq).bind_int(":instrument", readings[seq].instrument_id)
            .bind_text(":kind", readings[seq].kind).bind_real(":value", readings[seq].value).bind_text(":at", at_s(t + 0.25 * seq));
        reading->run();
        reading->reset();
      }
      ++points;
    }
    auto result = db.cached(
        "INSERT INTO sweep_result (sweep_id, computed_at, fit_points, v_oc_volts, z_out_ohms, z_out_stderr_ohms, "
        "rated_load_amps, ripple_rated_pp_volts, verdict) VALUES (:sweep, :at, 6, :voc, :z, :zerr, 0.00095, :ripple, :verdict)");
    result->bind_int(":sweep", sweep_id).bind_text(":at", at_s(t0 + 3.0 * points_per_sweep)).bind_real(":voc", 2000.0 + jitter(random))
        .bind_real(":z", unit_z + 1e3 * jitter(random)).bind_real(":zerr", 800.0).bind_real(":ripple", 34.0 + jitter(random))
        .bind_text(":verdict", unit_z < 1.25e6 ? "pass" : "fail");
    result->run();
  };
  const auto add_run = [&](std::int64_t unit_id, std::int64_t plan_id, const char* kind, double t0, double t1) {
    auto run = db.cached(
        "INSERT INTO run (unit_id, plan_id, station_id, kind, state, queued_at, started_at, ended_at, operator) "
        "VALUES (:unit, :plan, 1, :kind, :state, :queued, :queued, :ended, 'bench')");
    run->bind_int(":unit", unit_id).bind_int(":plan", plan_id).bind_text(":kind", kind).bind_text(":state", "passed")
        .bind_text(":queued", at_s(t0)).bind_text(":ended", at_s(t1));
    run->run();
    return db.last_insert_rowid();
  };
  const auto add_unit = [&](double t) {
    auto unit = db.cached("INSERT INTO unit (serial, model, first_seen_at) VALUES (:serial, 'CW5', :at)");
    unit->bind_text(":serial", fmt::format("CW5-{:07}", ++serial_count)).bind_text(":at", at_s(t));
    unit->run();
    return db.last_insert_rowid();
  };

  for (int day = 0; day < days; ++day) {
    Transaction transaction(db);
    const double day_s = 86400.0 * day;
    std::int64_t first_unit_today = 0;
    for (int r = 0; r < production_runs_per_day; ++r) {
      const double t0 = day_s + 6 * 3600.0 + 60.0 * r;
      std::int64_t unit_id = 0;
      if (serial_count > 100 && random() % 100 < 3) {
        unit_id = static_cast<std::int64_t>(1 + random() % static_cast<std::uint64_t>(serial_count));
      } else {
        unit_id = add_unit(t0);
      }
      if (first_unit_today == 0) first_unit_today = unit_id;
      const std::int64_t run_id = add_run(unit_id, 1, "production", t0, t0 + 3.0 * points_per_sweep);
      add_sweep(run_id, 0, t0, 1.2e6 + 1e5 * jitter(random));
    }
    const double soak_start = day_s + 13 * 3600.0;
    const std::int64_t soak_run = add_run(first_unit_today, 2, "soak", soak_start, soak_start + 60.0 * soak_sweeps_per_day);
    for (int s = 0; s < soak_sweeps_per_day; ++s) add_sweep(soak_run, s, soak_start + 60.0 * s, 1.2e6 + 20.0 * s);
    transaction.commit();
    if ((day + 1) % 30 == 0) {
      std::fprintf(stderr, "  day %d: %ld points, %.0f s\n", day + 1, points, seconds_since(start));
    }
  }
  db.exec("ANALYZE; PRAGMA journal_mode = WAL");
  fmt::print("generated {} days: {} points ({} readings each), {} units, in {:.0f} s\n", days, points,
             readings_per_point, serial_count, seconds_since(start));
  return 0;
}

double median_ms(ReadOnlyQuery& query, const std::string& sql, int repeat, long& rows) {
  std::vector<double> times;
  for (int i = 0; i < repeat; ++i) {
    rows = 0;
    const auto start = Clock::now();
    query.run(sql, std::chrono::milliseconds(0), [](const auto&) {}, [&rows](const auto&) { ++rows; });
    times.push_back(seconds_since(start) * 1e3);
  }
  std::sort(times.begin(), times.end());
  return times[times.size() / 2];
}

std::string first_text(ReadOnlyQuery& query, const std::string& sql) {
  std::string text;
  query.run(sql, std::chrono::milliseconds(0), [](const auto&) {}, [&text](const std::vector<QueryValue>& row) {
    if (!text.empty()) text += "; ";
    if (const auto* s = std::get_if<std::string>(&row.back())) text += *s;
    if (const auto* n = std::get_if<std::int64_t>(&row.back())) text += std::to_string(*n);
  });
  return text;
}

int time_history(const std::string& path, int repeat) {
  ReadOnlyQuery query(path);
  // A unit soaked mid-year: it has a production run and a soak run.
  const std::string serial = first_text(query,
      "SELECT u.serial FROM run r JOIN unit u USING (unit_id) WHERE r.kind = 'soak' ORDER BY r.run_id "
      "LIMIT 1 OFFSET (SELECT count(*) / 2 FROM run WHERE kind = 'soak')");
  const std::string day = first_text(query,
      "SELECT day FROM run_summary WHERE run_id = (SELECT max(run_id) / 2 FROM run)");
  const std::string history_sql = fmt::format("SELECT * FROM unit_history WHERE serial = '{}'", serial);
  const std::string summary_sql = fmt::format("SELECT * FROM run_summary WHERE day = '{}'", day);
  long history_rows = 0;
  long summary_rows = 0;
  const double history_ms = median_ms(query, history_sql, repeat, history_rows);
  const double summary_ms = median_ms(query, summary_sql, repeat, summary_rows);
  fmt::print("unit_history  {:<55} {:>4} rows  median {:.2f} ms of {} (target < 20 ms)\n", history_sql, history_rows,
             history_ms, repeat);
  fmt::print("run_summary   {:<55} {:>4} rows  median {:.2f} ms of {} (target < 50 ms)\n", summary_sql, summary_rows,
             summary_ms, repeat);
  for (const auto& sql : {history_sql, summary_sql}) {
    fmt::print("plan of {}:\n", sql);
    query.run("EXPLAIN QUERY PLAN " + sql, std::chrono::milliseconds(0), [](const auto&) {},
              [](const std::vector<QueryValue>& row) { fmt::print("    {}\n", std::get<std::string>(row.back())); });
  }
  long points = 0;
  query.run("SELECT count(*) FROM point", std::chrono::milliseconds(0), [](const auto&) {},
            [&points](const std::vector<QueryValue>& row) { points = std::get<std::int64_t>(row[0]); });
  const auto bytes = std::filesystem::file_size(path);
  fmt::print("database {:.2f} GB, {} points: {:.0f} bytes per point ({} readings each, indexes included)\n",
             static_cast<double>(bytes) / 1e9, points, static_cast<double>(bytes) / static_cast<double>(points),
             readings_per_point);
  return 0;
}

}  // namespace

int main(int argc, char** argv) {
  const std::vector<std::string> args(argv + 1, argv + argc);
  try {
    if (args.size() == 3 && args[0] == "commits") return commits(args[1], std::stol(args[2]));
    if (args.size() == 4 && args[0] == "raw-sql") return raw_sql(args[1], args[2], std::stol(args[3]));
    if (args.size() >= 2 && args[0] == "history") return history(args[1], args.size() > 2 ? std::stoi(args[2]) : 365);
    if (args.size() >= 2 && args[0] == "time-history") return time_history(args[1], args.size() > 2 ? std::stoi(args[2]) : 9);
  } catch (const std::exception& e) {
    std::fprintf(stderr, "zout-store-bench: %s\n", e.what());
    return 1;
  }
  std::fprintf(stderr,
               "usage: zout-store-bench commits DB POINTS | raw-sql DB FILE POINTS | history DB [DAYS] | "
               "time-history DB [REPEAT]\n");
  return 2;
}
