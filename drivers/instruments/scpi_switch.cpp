#include "scpi_switch.h"

#include <stdexcept>
#include <utility>

#include <fmt/format.h>

namespace zout {
namespace {

double checked_slot(int slot) {
  if (slot < 1) throw std::invalid_argument(fmt::format("switch: slot must be 1 or more, got {}", slot));
  return static_cast<double>(slot);
}

}  // namespace

ScpiSwitch::ScpiSwitch(Session& session, Dialect dialect) : runner_(session, std::move(dialect), "switch") {}

void ScpiSwitch::close_slot(int slot) {
  const double value = checked_slot(slot);
  runner_.run("open_all");  // one unit on the bench at a time, whatever the instrument's habit
  runner_.run("close_slot", {{"slot", value}});
}

void ScpiSwitch::open_all() { runner_.run("open_all"); }

bool ScpiSwitch::is_closed(int slot) { return runner_.ask_boolean("read_closed", {{"slot", checked_slot(slot)}}); }

}  // namespace zout
