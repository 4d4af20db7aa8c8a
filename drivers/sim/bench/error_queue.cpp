#include "error_queue.h"

#include <stdexcept>

#include "scpi_error.h"

namespace zout::sim {

ErrorQueue::ErrorQueue(std::size_t capacity) : capacity_(capacity) {
  if (capacity_ < 2) throw std::invalid_argument("error queue capacity must be at least 2");
}

void ErrorQueue::push(int code, const std::string& detail) {
  std::string message = scpi_error_description(code);
  if (!detail.empty()) message += ";" + detail;
  if (entries_.size() < capacity_) {
    entries_.push_back({code, std::move(message)});
    return;
  }
  // Full: the newest entry becomes the overflow marker (once); this error is lost.
  if (entries_.back().code != scpi_code::queue_overflow) {
    entries_.back() = {scpi_code::queue_overflow, scpi_error_description(scpi_code::queue_overflow)};
  }
}

QueuedError ErrorQueue::pop() {
  if (entries_.empty()) return {0, scpi_error_description(0)};
  QueuedError entry = std::move(entries_.front());
  entries_.pop_front();
  return entry;
}

std::string ErrorQueue::format(const QueuedError& entry) {
  // SCPI-1999 Vol 2 §21.8: <error number>,"<error description>;<device-dependent info>",
  // the string in IEEE 488.2 §8.7.8 form (an embedded quote doubled).
  std::string out = std::to_string(entry.code) + ",\"";
  for (char c : entry.message) {
    out += c;
    if (c == '"') out += '"';
  }
  out += '"';
  return out;
}

}  // namespace zout::sim
