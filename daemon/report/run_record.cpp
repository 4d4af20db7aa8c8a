#include "run_record.h"

#include <fmt/format.h>

#include "daemon/store/run_reader.h"

namespace zout::report {

const store::SweepResultRecord* RunRecord::latest_result() const {
  return header.latest_result ? &*header.latest_result : nullptr;
}

std::vector<const store::SweepResultRecord*> RunRecord::sweep_results() const {
  std::vector<const store::SweepResultRecord*> out;
  for (const auto& w : sweeps) {
    if (w.result) out.push_back(&*w.result);
  }
  return out;
}

std::vector<const store::StoredPoint*> RunRecord::points_of_sweep(int sweep) const {
  std::vector<const store::StoredPoint*> out;
  for (const auto& p : points) {
    if (p.sweep == sweep) out.push_back(&p);
  }
  return out;
}

std::size_t RunRecord::reading_count() const {
  std::size_t count = 0;
  for (const auto& p : points) count += p.readings.size();
  return count;
}

RunRecord load_run_record(const std::filesystem::path& database_path, std::int64_t run_id) {
  store::RunReader reader(database_path);
  auto history = reader.history(run_id);
  if (!history) throw RunNotFound(fmt::format("no run {} in {}", run_id, database_path.string()));
  RunRecord record;
  record.database_path = database_path;
  record.header = std::move(history->summary);
  record.plan_json = std::move(history->plan_json);
  record.sweeps = std::move(history->sweeps);
  record.points = std::move(history->points);
  record.events = std::move(history->events);
  record.plan_document = nlohmann::json::parse(record.plan_json, nullptr, false);
  try {
    record.plan = parse_plan(record.plan_document, fmt::format("plan of run {} in {}", run_id, database_path.string()));
  } catch (const std::exception& e) {  // ConfigError naming the path and rule, or a JSON error
    record.plan_error = e.what();
  }
  return record;
}

}  // namespace zout::report
