#include "instrument_faults.h"

namespace zout::sim {

namespace {
constexpr FaultKind all_kinds[] = {FaultKind::drop, FaultKind::stall, FaultKind::garbage, FaultKind::split,
                                   FaultKind::overload};
}

const char* to_string(FaultKind kind) {
  switch (kind) {
    case FaultKind::drop: return "drop";
    case FaultKind::stall: return "stall";
    case FaultKind::garbage: return "garbage";
    case FaultKind::split: return "split";
    case FaultKind::overload: return "overload";
  }
  return "?";
}

std::optional<FaultKind> fault_kind_named(std::string_view name) {
  for (auto kind : all_kinds) {
    if (name == to_string(kind)) return kind;
  }
  return std::nullopt;
}

std::string fault_kind_names() {
  std::string out;
  for (auto kind : all_kinds) out += (out.empty() ? "" : ", ") + std::string(to_string(kind));
  return out;
}

void InstrumentFaults::inject(FaultKind kind, std::optional<int> count) {
  active_[kind] = count ? *count : -1;
}

void InstrumentFaults::clear(FaultKind kind) { active_.erase(kind); }

void InstrumentFaults::clear_all() { active_.clear(); }

bool InstrumentFaults::active(FaultKind kind) const { return active_.count(kind) != 0; }

bool InstrumentFaults::consume(FaultKind kind) {
  const auto it = active_.find(kind);
  if (it == active_.end()) return false;
  if (it->second > 0 && --it->second == 0) active_.erase(it);
  return true;
}

std::map<std::string, int> InstrumentFaults::describe() const {
  std::map<std::string, int> out;
  for (const auto& [kind, count] : active_) out[to_string(kind)] = count;
  return out;
}

}  // namespace zout::sim
