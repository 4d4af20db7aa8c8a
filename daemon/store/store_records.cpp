#include "store_records.h"

namespace zout::store {

std::string_view to_string(RunKind kind) { return kind == RunKind::production ? "production" : "soak"; }

std::string_view to_string(EventLevel level) {
  switch (level) {
    case EventLevel::info: return "info";
    case EventLevel::warning: return "warning";
    case EventLevel::error: return "error";
  }
  return "error";
}

std::string_view to_string(Verdict verdict) { return verdict == Verdict::pass ? "pass" : "fail"; }

std::optional<RunKind> run_kind_named(std::string_view word) {
  if (word == "production") return RunKind::production;
  if (word == "soak") return RunKind::soak;
  return std::nullopt;
}

std::optional<EventLevel> event_level_named(std::string_view word) {
  for (const EventLevel level : {EventLevel::info, EventLevel::warning, EventLevel::error}) {
    if (to_string(level) == word) return level;
  }
  return std::nullopt;
}

std::optional<Verdict> verdict_named(std::string_view word) {
  if (word == "pass") return Verdict::pass;
  if (word == "fail") return Verdict::fail;
  return std::nullopt;
}

}  // namespace zout::store
