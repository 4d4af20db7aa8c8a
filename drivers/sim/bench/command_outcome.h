#pragma once
// What executing one program message unit produced: an immediate reply, a reading still to
// be taken over time, how long the instrument stays busy, and whether the rest of the
// program message is to be skipped after a command error.

#include <memory>
#include <optional>
#include <string>

#include "acquisition.h"

namespace zout::sim {

struct CommandOutcome {
  std::optional<std::string> reply;           // a query's response message unit
  std::shared_ptr<Acquisition> acquisition;   // set: the reply comes from it, after its samples
  // Time the instrument needs beyond parsing, before the acquisition (if any) starts and
  // before the next unit runs (a function switch, a relay).
  double busy_s = 0.0;
  bool skip_rest = false;                     // a command error: the rest of the message is dropped

  static CommandOutcome none() { return {}; }
  static CommandOutcome answer(std::string text) {
    CommandOutcome out;
    out.reply = std::move(text);
    return out;
  }
};

}  // namespace zout::sim
