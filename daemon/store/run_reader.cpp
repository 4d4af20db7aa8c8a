#include "run_reader.h"

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <map>

#include "daemon/store/database.h"
#include "daemon/store/store_error.h"
#include "daemon/store/sweep_figures.h"

namespace zout::store {
namespace {

std::optional<double> optional_real(const Statement& s, int column) {
  return s.is_null(column) ? std::nullopt : std::optional<double>(s.column_real(column));
}

std::optional<TimePoint> optional_time(const Statement& s, int column) {
  return s.is_null(column) ? std::nullopt : std::optional<TimePoint>(parse_utc(s.column_text(column)));
}

// A stored word that the vocabulary does not know means the database is not one zout wrote.
template <typename Named>
auto known_word(const Database& db, const std::string& word, const char* what, Named named) {
  const auto value = named(word);
  if (!value) throw StoreError(StoreError::Kind::failure, fmt::format("{}: unknown {} \"{}\"", db.where(), what, word));
  return *value;
}

// The sweep_result columns a reader selects, in the order read_sweep_result takes them.
std::string sweep_result_columns(std::string_view alias) {
  return fmt::format("{0}.sweep_id, {0}.computed_at, {0}.fit_points, {0}.verdict, {0}.verdict_reasons_json, {1}", alias,
                     sweep_figure_select_list(alias));
}

// The sweep_result selected by sweep_result_columns() from `first` on; nullopt when the LEFT
// JOIN found none. `sweep` is the sweep's number from 1.
std::optional<SweepResultRecord> read_sweep_result(const Database& db, const Statement& s, int first, int sweep) {
  if (s.is_null(first)) return std::nullopt;
  SweepResultRecord r;
  r.sweep_id = s.column_int(first);
  r.sweep = sweep;
  r.computed_at = parse_utc(s.column_text(first + 1));
  r.fit_points = static_cast<int>(s.column_int(first + 2));
  if (!s.is_null(first + 3)) r.verdict = known_word(db, s.column_text(first + 3), "verdict", verdict_named);
  const auto reasons = nlohmann::json::parse(s.column_text(first + 4), nullptr, false);
  if (reasons.is_array()) {
    for (const auto& reason : reasons) r.verdict_reasons.push_back(reason.is_string() ? reason.get<std::string>() : reason.dump());
  }
  int column = first + 5;
  for (const auto& figure : sweep_figures) r.*figure.member = optional_real(s, column++);
  return r;
}

// The run_summary columns (and the latest result) read by read_summary, over `s` and `x`.
std::string summary_select() {
  return fmt::format(
      "SELECT s.run_id, s.station, s.serial, s.model, s.plan_name, s.kind, s.state, s.queued_at, s.started_at, "
      "s.ended_at, s.operator, s.note, s.slot, s.sweeps, s.result_sweep, {} "
      "FROM run_summary s LEFT JOIN sweep_result x ON x.sweep_id = s.result_sweep_id ",
      sweep_result_columns("x"));
}

RunSummary read_summary(const Database& db, const Statement& s) {
  RunSummary r;
  r.run_id = s.column_int(0);
  r.station = s.column_text(1);
  r.serial = s.column_text(2);
  r.model = s.column_text(3);
  r.plan_name = s.column_text(4);
  r.kind = known_word(db, s.column_text(5), "run kind", run_kind_named);
  r.state = known_word(db, s.column_text(6), "run state", run_state_named);
  r.queued_at = parse_utc(s.column_text(7));
  r.started_at = optional_time(s, 8);
  r.ended_at = optional_time(s, 9);
  r.operator_name = s.column_text(10);
  r.note = s.column_text(11);
  if (!s.is_null(12)) r.slot = static_cast<int>(s.column_int(12));
  r.sweeps = static_cast<int>(s.column_int(13));
  r.latest_result = read_sweep_result(db, s, 15, s.is_null(14) ? 0 : static_cast<int>(s.column_int(14)));
  return r;
}

// Rolls a read transaction back when left early; the caller commits it.
class ReadTransaction {
 public:
  explicit ReadTransaction(Database& db) : db_(db) { db_.exec("BEGIN"); }
  ~ReadTransaction() {
    if (db_.in_transaction()) {
      try {
        db_.exec("ROLLBACK");
      } catch (...) {  // never throw from here; SQLite ends the transaction on close
      }
    }
  }
  ReadTransaction(const ReadTransaction&) = delete;
  ReadTransaction& operator=(const ReadTransaction&) = delete;
  void end() { db_.exec("COMMIT"); }

 private:
  Database& db_;
};

}  // namespace

RunReader::RunReader(const std::filesystem::path& path)
    : owned_(std::make_unique<Database>(path, Database::Access::read_only)), db_(*owned_) {
  db_.exec("PRAGMA busy_timeout = 5000");
}

RunReader::RunReader(Database& connection) : db_(connection) {}

RunReader::~RunReader() = default;

std::optional<RunSummary> RunReader::run(std::int64_t run_id) {
  static const std::string sql = summary_select() + "WHERE s.run_id = :run";
  auto use = db_.cached(sql);
  use->bind_int(":run", run_id);
  if (!use->step()) return std::nullopt;
  return read_summary(db_, *use);
}

std::vector<RunSummary> RunReader::runs(const RunFilter& filter) {
  static const std::string sql = summary_select() +
                                 "WHERE (:state = '' OR s.state = :state) AND (:serial = '' OR s.serial = :serial) "
                                 "ORDER BY s.run_id DESC LIMIT :limit";
  auto use = db_.cached(sql);
  use->bind_text(":state", filter.state ? to_string(*filter.state) : std::string_view(""))
      .bind_text(":serial", filter.serial)
      .bind_int(":limit", filter.limit);
  std::vector<RunSummary> out;
  while (use->step()) out.push_back(read_summary(db_, *use));
  return out;
}

std::int64_t RunReader::point_count(std::int64_t run_id) {
  auto use = db_.cached("SELECT count(*) FROM point pt JOIN sweep w ON w.sweep_id = pt.sweep_id WHERE w.run_id = :run");
  use->bind_int(":run", run_id);
  use->step();
  return use->column_int(0);
}

std::optional<QueuedRun> RunReader::next_queued_run(std::int64_t station_id) {
  auto use = db_.cached(
      "SELECT r.run_id, p.name, p.content_json, u.serial, r.slot, r.operator, r.note "
      "FROM run r JOIN plan p ON p.plan_id = r.plan_id JOIN unit u ON u.unit_id = r.unit_id "
      "WHERE r.state = 'queued' AND r.station_id = :station ORDER BY r.run_id LIMIT 1");
  use->bind_int(":station", station_id);
  if (!use->step()) return std::nullopt;
  QueuedRun q;
  q.run_id = use->column_int(0);
  q.plan_name = use->column_text(1);
  q.plan_json = use->column_text(2);
  q.serial = use->column_text(3);
  if (!use->is_null(4)) q.slot = static_cast<int>(use->column_int(4));
  q.operator_name = use->column_text(5);
  q.note = use->column_text(6);
  return q;
}

std::optional<RunHistory> RunReader::history(std::int64_t run_id) {
  ReadTransaction snapshot(db_);
  RunHistory h;
  {
    auto summary = run(run_id);
    if (!summary) return std::nullopt;
    h.summary = std::move(*summary);
  }
  {
    auto s = db_.prepare("SELECT p.content_json FROM run r JOIN plan p ON p.plan_id = r.plan_id WHERE r.run_id = :run");
    s.bind_int(":run", run_id);
    s.step();
    h.plan_json = s.column_text(0);
  }
  {
    auto s = db_.prepare(fmt::format(
        "SELECT w.sweep_id, w.sweep_index + 1, w.started_at, w.ended_at, "
        "round((julianday(w.started_at) - julianday(coalesce(r.started_at, w.started_at))) * 86400.0, 3), {} "
        "FROM sweep w JOIN run r ON r.run_id = w.run_id LEFT JOIN sweep_result x ON x.sweep_id = w.sweep_id "
        "WHERE w.run_id = :run ORDER BY w.sweep_index",
        sweep_result_columns("x")));
    s.bind_int(":run", run_id);
    while (s.step()) {
      StoredSweep w;
      w.sweep_id = s.column_int(0);
      w.sweep = static_cast<int>(s.column_int(1));
      w.started_at = parse_utc(s.column_text(2));
      w.ended_at = optional_time(s, 3);
      w.elapsed_s = s.column_real(4);
      w.result = read_sweep_result(db_, s, 5, w.sweep);
      h.sweeps.push_back(std::move(w));
    }
  }
  std::map<std::int64_t, std::size_t> index_of_point;
  {
    auto s = db_.prepare(
        "SELECT point_id, sweep_id, sweep, step, load_amps, set_load_amps, set_load_ohms, measured_load_amps, dc_volts, "
        "ripple_rms_volts, ripple_pp_volts, settle_s, settled, step_started_at, taken_at "
        "FROM iv_curve WHERE run_id = :run ORDER BY sweep, step");
    s.bind_int(":run", run_id);
    while (s.step()) {
      StoredPoint p;
      p.point_id = s.column_int(0);
      p.point.sweep_id = s.column_int(1);
      p.sweep = static_cast<int>(s.column_int(2));
      p.step = static_cast<int>(s.column_int(3));
      p.point.step_index = p.step - 1;
      p.load_amps = optional_real(s, 4);
      p.point.set_load_amps = optional_real(s, 5);
      p.point.set_load_ohms = optional_real(s, 6);
      p.point.measured_load_amps = optional_real(s, 7);
      p.point.dc_volts = s.column_real(8);
      p.point.ripple_rms_volts = optional_real(s, 9);
      p.point.ripple_pp_volts = optional_real(s, 10);
      p.point.settle_s = s.column_real(11);
      p.point.settled = s.column_int(12) != 0;
      p.point.step_started_at = parse_utc(s.column_text(13));
      p.point.taken_at = parse_utc(s.column_text(14));
      index_of_point[p.point_id] = h.points.size();
      h.points.push_back(std::move(p));
    }
  }
  {
    auto s = db_.prepare(
        "SELECT rd.point_id, rd.seq, rd.instrument_id, i.role, rd.kind, rd.value, rd.taken_at "
        "FROM reading rd JOIN point p ON p.point_id = rd.point_id JOIN sweep w ON w.sweep_id = p.sweep_id "
        "JOIN instrument i ON i.instrument_id = rd.instrument_id "
        "WHERE w.run_id = :run ORDER BY rd.point_id, rd.seq");
    s.bind_int(":run", run_id);
    while (s.step()) {
      StoredReading r;
      r.seq = static_cast<int>(s.column_int(1));
      r.reading.instrument_id = s.column_int(2);
      r.instrument_role = s.column_text(3);
      r.reading.kind = s.column_text(4);
      r.reading.value = s.column_real(5);
      r.reading.taken_at = parse_utc(s.column_text(6));
      h.points[index_of_point.at(s.column_int(0))].readings.push_back(std::move(r));
    }
  }
  {
    auto s = db_.prepare(
        "SELECT event_id, at, level, source, code, message, run_id, station_id FROM event WHERE run_id = :run "
        "ORDER BY at, event_id");
    s.bind_int(":run", run_id);
    while (s.step()) {
      StoredEvent e;
      e.event_id = s.column_int(0);
      e.event.at = parse_utc(s.column_text(1));
      e.event.level = known_word(db_, s.column_text(2), "event level", event_level_named);
      e.event.source = s.column_text(3);
      e.event.code = s.column_text(4);
      e.event.message = s.column_text(5);
      if (!s.is_null(6)) e.event.run_id = s.column_int(6);
      if (!s.is_null(7)) e.event.station_id = s.column_int(7);
      h.events.push_back(std::move(e));
    }
  }
  snapshot.end();
  return h;
}

}  // namespace zout::store
