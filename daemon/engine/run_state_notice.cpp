#include "run_state_notice.h"

#include <string>

namespace zout {

nlohmann::json run_state_params(std::int64_t run_id, store::RunState state, store::TimePoint at,
                                std::string_view reason) {
  return {{"run_id", run_id},
          {"state", std::string(store::to_string(state))},
          {"at", store::format_utc(at)},
          {"reason", reason.empty() ? nlohmann::json() : nlohmann::json(std::string(reason))}};
}

}  // namespace zout
