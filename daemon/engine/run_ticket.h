#pragma once
// One run as the engine executes it: which plan, on which unit, in which panel slot.
// Created by run.start (queued in the store first) and read back from the store after a
// restart, so the queue survives the daemon.

#include <cstdint>
#include <optional>
#include <string>

#include "daemon/plan/plan.h"

namespace zout {

struct RunTicket {
  std::int64_t run_id = 0;
  Plan plan;
  std::string plan_origin;  // file path or "inline", for messages
  std::string unit_serial;
  std::optional<int> slot;  // panel slot, when the bench has a switch
  std::string operator_name;
  std::string note;
};

}  // namespace zout
