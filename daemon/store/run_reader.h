#pragma once
// The store's readers: the one place, besides StoreWriter, that prepares SQL against the
// schema. A run as run_summary shows it, a filtered list of runs, a run's point count, the next
// queued run of a station, and a run's whole history read as of one moment. Everything comes
// back as the store's own records (read_records.h); JSON for the api is record_json.h.
// Errors are StoreError naming the file. Use from one thread at a time.

#include <cstdint>
#include <filesystem>
#include <memory>
#include <optional>
#include <vector>

#include "daemon/store/read_records.h"

namespace zout::store {

class Database;

class RunReader {
 public:
  // Opens `path` read-only (SQLITE_OPEN_READONLY; the file must exist and is never written).
  explicit RunReader(const std::filesystem::path& path);
  // Reads over an open connection (the writer's own, for the engine's queue); `connection`
  // must outlive the reader.
  explicit RunReader(Database& connection);
  ~RunReader();
  RunReader(const RunReader&) = delete;
  RunReader& operator=(const RunReader&) = delete;

  // The run, or nullopt when there is no such run.
  std::optional<RunSummary> run(std::int64_t run_id);
  // The runs the filter admits, newest (highest run_id) first, at most filter.limit.
  std::vector<RunSummary> runs(const RunFilter& filter);
  // How many points the run has committed.
  std::int64_t point_count(std::int64_t run_id);
  // The oldest queued run of the station, or nullopt when its queue is empty.
  std::optional<QueuedRun> next_queued_run(std::int64_t station_id);
  // The run's summary, plan, sweeps with results, points with readings and events, in one
  // read transaction (consistent even while zoutd writes); nullopt when there is no such run.
  std::optional<RunHistory> history(std::int64_t run_id);

 private:
  std::unique_ptr<Database> owned_;
  Database& db_;
};

}  // namespace zout::store
