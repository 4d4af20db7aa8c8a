#pragma once
// What run.get reports about the run in progress: where it is and its latest point.

#include <cstdint>
#include <nlohmann/json.hpp>

namespace zout {

struct RunProgress {
  std::int64_t run_id = 0;
  int sweep_index = 0;  // 0-based sweep in progress
  int sweep_count = 0;
  int step_index = 0;   // 0-based step in progress
  int step_count = 0;
  nlohmann::json latest_point;  // the last point notification's params, or null

  nlohmann::json to_json() const {
    return {{"run_id", run_id},
            {"sweep", sweep_index + 1},
            {"sweep_count", sweep_count},
            {"step", step_index + 1},
            {"step_count", step_count},
            {"latest_point", latest_point}};
  }
};

}  // namespace zout
