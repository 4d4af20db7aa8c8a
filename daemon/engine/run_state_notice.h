#pragma once
// The params of the `run.state` notification, built in one place so every state change
// reports the same fields: run_id, state (the store's word), at (ISO-8601 UTC) and reason
// (always present; null when the change has none).

#include <cstdint>
#include <string_view>

#include <nlohmann/json.hpp>

#include "daemon/store/store_records.h"
#include "daemon/store/utc_time.h"

namespace zout {

// `reason` empty means there is none (null in the params).
nlohmann::json run_state_params(std::int64_t run_id, store::RunState state, store::TimePoint at,
                                std::string_view reason);

}  // namespace zout
