#include "store_writer.h"

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <utility>

#include "daemon/store/run_reader.h"
#include "daemon/store/sha256.h"
#include "daemon/store/store_error.h"
#include "daemon/store/sweep_figures.h"
#include "daemon/store/transaction.h"

namespace zout::store {
namespace {

StoreError bad_input(const std::string& message) { return StoreError(StoreError::Kind::bad_input, message); }

std::filesystem::path created_parent(const std::filesystem::path& path) {
  const auto parent = path.parent_path();
  if (!parent.empty()) {
    std::error_code error;
    std::filesystem::create_directories(parent, error);
    if (error) {
      throw StoreError(StoreError::Kind::failure,
                       fmt::format("database {}: cannot create directory {}: {}", path.string(), parent.string(),
                                   error.message()));
    }
  }
  return path;
}

std::string sweep_result_insert_sql() {
  std::string columns = "sweep_id, computed_at, fit_points, verdict, verdict_reasons_json";
  std::string values = ":sweep_id, :computed_at, :fit_points, :verdict, :verdict_reasons_json";
  for (const auto& figure : sweep_figures) {
    columns += fmt::format(", {}", figure.column);
    values += fmt::format(", :{}", figure.column);
  }
  return fmt::format("INSERT INTO sweep_result ({}) VALUES ({})", columns, values);
}

}  // namespace

StoreWriter::StoreWriter(const std::filesystem::path& path, const std::vector<Migration>& migrations)
    : db_(created_parent(path), Database::Access::read_write_create) {
  db_.exec("PRAGMA busy_timeout = 5000");
  // First, before anything can write to the file: refuses a newer, foreign or non-SQLite file.
  apply_migrations(db_, migrations);
  db_.exec("PRAGMA foreign_keys = ON");
  db_.exec("PRAGMA synchronous = FULL");
  Statement journal = db_.prepare("PRAGMA journal_mode = WAL");
  journal.step();
  if (journal.column_text(0) != "wal") {
    throw StoreError(StoreError::Kind::failure,
                     fmt::format("{}: cannot switch to WAL journal mode (got {})", db_.where(), journal.column_text(0)));
  }
  if (db_.pragma_int("foreign_keys") != 1) {
    throw StoreError(StoreError::Kind::failure, fmt::format("{}: foreign keys could not be enabled", db_.where()));
  }
}

std::int64_t StoreWriter::record_station(std::string_view name, TimePoint at) {
  auto insert = db_.cached(
      "INSERT INTO station (name, first_seen_at, last_seen_at) VALUES (:name, :at, :at) "
      "ON CONFLICT (name) DO UPDATE SET last_seen_at = max(last_seen_at, excluded.last_seen_at) "
      "RETURNING station_id");
  insert->bind_text(":name", name).bind_text(":at", format_utc(at));
  return insert->run_returning_id();
}

std::int64_t StoreWriter::record_instrument(const InstrumentRecord& instrument, TimePoint at) {
  auto insert = db_.cached(
      "INSERT INTO instrument (station_id, role, address, manufacturer, model, serial_number, firmware, "
      "first_seen_at, last_seen_at) "
      "VALUES (:station_id, :role, :address, :manufacturer, :model, :serial_number, :firmware, :at, :at) "
      "ON CONFLICT (station_id, role, address, manufacturer, model, serial_number, firmware) "
      "DO UPDATE SET last_seen_at = max(last_seen_at, excluded.last_seen_at) "
      "RETURNING instrument_id");
  insert->bind_int(":station_id", instrument.station_id)
      .bind_text(":role", instrument.role)
      .bind_text(":address", instrument.address)
      .bind_text(":manufacturer", instrument.manufacturer)
      .bind_text(":model", instrument.model)
      .bind_text(":serial_number", instrument.serial_number)
      .bind_text(":firmware", instrument.firmware)
      .bind_text(":at", format_utc(at));
  return insert->run_returning_id();
}

std::int64_t StoreWriter::record_plan(std::string_view name, std::string_view json_text, TimePoint at) {
  nlohmann::json plan;
  try {
    plan = nlohmann::json::parse(json_text);
  } catch (const nlohmann::json::parse_error& e) {
    throw bad_input(fmt::format("{}: plan {} is not valid JSON: {}", db_.where(), name, e.what()));
  }
  if (!plan.is_object()) throw bad_input(fmt::format("{}: plan {} must be a JSON object", db_.where(), name));
  const std::string canonical = plan.dump();
  const std::string hash = sha256_hex(canonical);
  {
    auto find = db_.cached("SELECT plan_id FROM plan WHERE content_sha256 = :hash AND name = :name");
    find->bind_text(":hash", hash).bind_text(":name", name);
    if (find->step()) return find->column_int(0);
  }
  auto insert = db_.cached(
      "INSERT INTO plan (name, content_sha256, content_json, recorded_at) VALUES (:name, :hash, :json, :at) "
      "RETURNING plan_id");
  insert->bind_text(":name", name).bind_text(":hash", hash).bind_text(":json", canonical).bind_text(":at", format_utc(at));
  return insert->run_returning_id();
}

std::int64_t StoreWriter::record_unit(std::string_view serial, std::string_view model, TimePoint at) {
  Transaction transaction(db_);
  std::int64_t unit_id = 0;
  {
    auto find = db_.cached("SELECT unit_id, model FROM unit WHERE serial = :serial");
    find->bind_text(":serial", serial);
    if (find->step()) {
      unit_id = find->column_int(0);
      const std::string known = find->column_text(1);
      if (!model.empty() && known != model) {
        if (!known.empty()) {
          throw bad_input(fmt::format("{}: unit {} is recorded as model {}, not {}", db_.where(), serial, known, model));
        }
        auto fill = db_.cached("UPDATE unit SET model = :model WHERE unit_id = :unit_id");
        fill->bind_text(":model", model).bind_int(":unit_id", unit_id).run();
      }
    }
  }
  if (unit_id == 0) {
    auto insert = db_.cached(
        "INSERT INTO unit (serial, model, first_seen_at) VALUES (:serial, :model, :at) RETURNING unit_id");
    insert->bind_text(":serial", serial).bind_text(":model", model).bind_text(":at", format_utc(at));
    unit_id = insert->run_returning_id();
  }
  transaction.commit();
  return unit_id;
}

std::int64_t StoreWriter::create_run(const NewRun& run) {
  if (run.state != RunState::queued && run.state != RunState::running) {
    throw bad_input(fmt::format("{}: a new run is queued or running, not {}", db_.where(), to_string(run.state)));
  }
  auto insert = db_.cached(
      "INSERT INTO run (unit_id, plan_id, station_id, kind, state, queued_at, started_at, operator, note, slot) "
      "VALUES (:unit_id, :plan_id, :station_id, :kind, :state, :at, :started_at, :operator, :note, :slot) "
      "RETURNING run_id");
  const std::string at = format_utc(run.at);
  insert->bind_int(":unit_id", run.unit_id)
      .bind_int(":plan_id", run.plan_id)
      .bind_int(":station_id", run.station_id)
      .bind_text(":kind", to_string(run.kind))
      .bind_text(":state", to_string(run.state))
      .bind_text(":at", at)
      .bind_text(":operator", run.operator_name)
      .bind_text(":note", run.note);
  if (run.state == RunState::running) {
    insert->bind_text(":started_at", at);
  } else {
    insert->bind_null(":started_at");
  }
  if (run.slot) {
    insert->bind_int(":slot", *run.slot);
  } else {
    insert->bind_null(":slot");
  }
  return insert->run_returning_id();
}

void StoreWriter::set_run_state(std::int64_t run_id, RunState state, TimePoint at) {
  if (state == RunState::queued) throw bad_input(fmt::format("{}: run {} cannot go back to queued", db_.where(), run_id));
  auto update = db_.cached(
      "UPDATE run SET state = :state, "
      "started_at = CASE WHEN :state = 'running' THEN max(:at, queued_at) ELSE started_at END, "
      "ended_at = CASE WHEN :state = 'running' THEN NULL ELSE max(:at, coalesce(started_at, queued_at)) END "
      "WHERE run_id = :run_id AND state <> :state");
  update->bind_text(":state", to_string(state)).bind_text(":at", format_utc(at)).bind_int(":run_id", run_id);
  int changed = 0;
  try {
    changed = update->run();
  } catch (const StoreError& e) {
    throw bad_input(fmt::format("run {} cannot become {}: {}", run_id, to_string(state), e.what()));
  }
  if (changed == 0) {
    auto find = db_.cached("SELECT state FROM run WHERE run_id = :run_id");
    find->bind_int(":run_id", run_id);
    if (!find->step()) throw bad_input(fmt::format("{}: no run {}", db_.where(), run_id));
    throw bad_input(fmt::format("{}: run {} is already {}", db_.where(), run_id, find->column_text(0)));
  }
}

int StoreWriter::interrupt_running_runs(TimePoint at) {
  auto update = db_.cached(
      "UPDATE run SET state = 'interrupted', ended_at = max(:at, started_at) WHERE state = 'running'");
  update->bind_text(":at", format_utc(at));
  return update->run();
}

std::int64_t StoreWriter::start_sweep(std::int64_t run_id, int sweep_index, TimePoint at) {
  auto insert = db_.cached(
      "INSERT INTO sweep (run_id, sweep_index, started_at) VALUES (:run_id, :sweep_index, :at) RETURNING sweep_id");
  insert->bind_int(":run_id", run_id).bind_int(":sweep_index", sweep_index).bind_text(":at", format_utc(at));
  return insert->run_returning_id();
}

void StoreWriter::end_sweep(std::int64_t sweep_id, TimePoint at) {
  auto update = db_.cached("UPDATE sweep SET ended_at = max(:at, started_at) WHERE sweep_id = :sweep_id");
  update->bind_text(":at", format_utc(at)).bind_int(":sweep_id", sweep_id);
  if (update->run() == 0) throw bad_input(fmt::format("{}: no sweep {}", db_.where(), sweep_id));
}

std::int64_t StoreWriter::commit_point(const PointRecord& point, const std::vector<ReadingRecord>& readings) {
  if (readings.empty()) {
    throw bad_input(fmt::format("{}: point {} of sweep {} has no readings; a point is committed with its raw readings",
                                db_.where(), point.step_index, point.sweep_id));
  }
  Transaction transaction(db_);
  std::int64_t point_id = 0;
  {
    auto insert = db_.cached(
        "INSERT INTO point (sweep_id, step_index, set_load_amps, set_load_ohms, measured_load_amps, dc_volts, "
        "ripple_rms_volts, ripple_pp_volts, settle_s, settled, step_started_at, taken_at) "
        "VALUES (:sweep_id, :step_index, :set_load_amps, :set_load_ohms, :measured_load_amps, :dc_volts, "
        ":ripple_rms_volts, :ripple_pp_volts, :settle_s, :settled, :step_started_at, :taken_at)");
    insert->bind_int(":sweep_id", point.sweep_id)
        .bind_int(":step_index", point.step_index)
        .bind_real(":set_load_amps", point.set_load_amps)
        .bind_real(":set_load_ohms", point.set_load_ohms)
        .bind_real(":measured_load_amps", point.measured_load_amps)
        .bind_real(":dc_volts", point.dc_volts)
        .bind_real(":ripple_rms_volts", point.ripple_rms_volts)
        .bind_real(":ripple_pp_volts", point.ripple_pp_volts)
        .bind_real(":settle_s", point.settle_s)
        .bind_int(":settled", point.settled ? 1 : 0)
        .bind_text(":step_started_at", format_utc(point.step_started_at))
        .bind_text(":taken_at", format_utc(point.taken_at));
    insert->run();
    point_id = db_.last_insert_rowid();
  }
  auto insert = db_.cached(
      "INSERT INTO reading (point_id, seq, instrument_id, kind, value, taken_at) "
      "VALUES (:point_id, :seq, :instrument_id, :kind, :value, :taken_at)");
  for (std::size_t seq = 0; seq < readings.size(); ++seq) {
    const ReadingRecord& reading = readings[seq];
    try {
      insert->bind_int(":point_id", point_id)
          .bind_int(":seq", static_cast<std::int64_t>(seq))
          .bind_int(":instrument_id", reading.instrument_id)
          .bind_text(":kind", reading.kind)
          .bind_real(":value", reading.value)
          .bind_text(":taken_at", format_utc(reading.taken_at));
      insert->run();
    } catch (const StoreError& e) {
      throw StoreError(e.kind(), fmt::format("reading {} ({}) of point {} of sweep {}: {}", seq, reading.kind,
                                             point.step_index, point.sweep_id, e.what()));
    }
    insert->reset();
  }
  transaction.commit();
  return point_id;
}

void StoreWriter::record_sweep_result(const SweepResultRecord& result) {
  static const std::string sql = sweep_result_insert_sql();
  auto insert = db_.cached(sql);
  nlohmann::json reasons = result.verdict_reasons;
  insert->bind_int(":sweep_id", result.sweep_id)
      .bind_text(":computed_at", format_utc(result.computed_at))
      .bind_int(":fit_points", result.fit_points)
      .bind_text(":verdict_reasons_json", reasons.dump());
  if (result.verdict) {
    insert->bind_text(":verdict", to_string(*result.verdict));
  } else {
    insert->bind_null(":verdict");
  }
  for (const auto& figure : sweep_figures) insert->bind_real(fmt::format(":{}", figure.column), result.*figure.member);
  insert->run();
}

std::optional<QueuedRun> StoreWriter::next_queued_run(std::int64_t station_id) {
  return RunReader(db_).next_queued_run(station_id);
}

std::int64_t StoreWriter::record_event(const EventRecord& event) {
  auto insert = db_.cached(
      "INSERT INTO event (at, level, source, code, message, run_id, station_id) "
      "VALUES (:at, :level, :source, :code, :message, :run_id, :station_id) RETURNING event_id");
  insert->bind_text(":at", format_utc(event.at))
      .bind_text(":level", to_string(event.level))
      .bind_text(":source", event.source)
      .bind_text(":code", event.code)
      .bind_text(":message", event.message);
  if (event.run_id) {
    insert->bind_int(":run_id", *event.run_id);
  } else {
    insert->bind_null(":run_id");
  }
  if (event.station_id) {
    insert->bind_int(":station_id", *event.station_id);
  } else {
    insert->bind_null(":station_id");
  }
  return insert->run_returning_id();
}

}  // namespace zout::store
