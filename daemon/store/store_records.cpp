#include "store_records.h"

namespace zout::store {

std::string_view to_string(RunKind kind) { return kind == RunKind::production ? "production" : "soak"; }

std::string_view to_string(RunState state) {
  switch (state) {
    case RunState::queued: return "queued";
    case RunState::running: return "running";
    case RunState::passed: return "passed";
    case RunState::failed: return "failed";
    case RunState::aborted: return "aborted";
    case RunState::interrupted: return "interrupted";
    case RunState::error: return "error";
  }
  return "error";
}

std::string_view to_string(EventLevel level) {
  switch (level) {
    case EventLevel::info: return "info";
    case EventLevel::warning: return "warning";
    case EventLevel::error: return "error";
  }
  return "error";
}

std::string_view to_string(Verdict verdict) { return verdict == Verdict::pass ? "pass" : "fail"; }

}  // namespace zout::store
