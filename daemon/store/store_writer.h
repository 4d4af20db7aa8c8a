#pragma once
// The daemon's one writer to the store (DEVELOPERS.md, "Storage"). Opens or creates the database, refuses a
// newer schema without touching it, applies pending migrations, and records what a run does.
//
// Connection settings (SQLite documentation, "PRAGMA statements" and "Write-Ahead Logging"):
// journal_mode=WAL (readers such as `zout query` never block the writer), synchronous=FULL
// (each commit is on disk before it returns), foreign_keys=ON, busy_timeout 5 s.
// Every method is all-or-nothing: on any error nothing of that call is written and a
// StoreError says what and where. Use from one thread at a time.

#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "daemon/store/database.h"
#include "daemon/store/migrations.h"
#include "daemon/store/read_records.h"
#include "daemon/store/store_records.h"

namespace zout::store {

class StoreWriter {
 public:
  // Opens `path` (creating it and its directory when missing) and migrates it with
  // `migrations` (the ones built into zout by default). See apply_migrations for refusals.
  explicit StoreWriter(const std::filesystem::path& path,
                       const std::vector<Migration>& migrations = embedded_migrations());

  // The station by name: inserted at first sight, its last_seen_at moved on afterwards.
  std::int64_t record_station(std::string_view name, TimePoint at);

  // The instrument identity (role, address, *IDN? fields): inserted when new, otherwise its
  // last_seen_at moved on. A changed identity at the same address is a new row.
  std::int64_t record_instrument(const InstrumentRecord& instrument, TimePoint at);

  // The plan, insert-or-get by (content hash, name). `json_text` must be a JSON object; it is
  // stored canonically (keys sorted, no spaces) and hashed (SHA-256) in that form, so the
  // same plan formatted differently is the same plan. Bad JSON is a StoreError(bad_input).
  std::int64_t record_plan(std::string_view name, std::string_view json_text, TimePoint at);

  // The unit by serial number. A model given for a serial recorded without one is filled in;
  // a different model for a serial that has one is a StoreError(bad_input).
  std::int64_t record_unit(std::string_view serial, std::string_view model, TimePoint at);

  // A new run, queued or already running (any other state is a StoreError(bad_input)).
  std::int64_t create_run(const NewRun& run);

  // Moves a run on: queued -> running | aborted | error; running -> passed | failed |
  // aborted | interrupted | error. Sets started_at on running and ended_at on a final state;
  // a time before the run's queue or start time (a clock stepped back) is taken as that time,
  // so a run can always end. Any other move, or an unknown run, is a StoreError(bad_input).
  void set_run_state(std::int64_t run_id, RunState state, TimePoint at);

  // Marks every run still `running` as `interrupted` (the daemon's start-up rule, DEVELOPERS.md, "Run lifecycle");
  // returns how many.
  int interrupt_running_runs(TimePoint at);

  // A new sweep of a run; sweep_index counts from 0 within the run.
  std::int64_t start_sweep(std::int64_t run_id, int sweep_index, TimePoint at);
  void end_sweep(std::int64_t sweep_id, TimePoint at);

  // The point and all its raw readings (at least one), in one transaction. Returns the new
  // point_id only once the commit is durable; after a crash at any moment the point is
  // either there whole, with every reading, or not at all.
  std::int64_t commit_point(const PointRecord& point, const std::vector<ReadingRecord>& readings);

  // The analysis of a sweep; one per sweep (a second is a StoreError(bad_input)).
  void record_sweep_result(const SweepResultRecord& result);

  std::int64_t record_event(const EventRecord& event);

  // The oldest queued run of the station (the engine's queue), read on this connection.
  std::optional<QueuedRun> next_queued_run(std::int64_t station_id);

  // The connection, for read-back in the store's own tests and tools. Do not write through it.
  Database& database() { return db_; }

 private:
  Database db_;
};

}  // namespace zout::store
