#pragma once
// The bounded error/event queue of one simulated instrument (SCPI-1999 Vol 2 §21.8):
// first in, first out; SYSTem:ERRor[:NEXT]? takes the oldest entry, and an empty queue
// answers 0,"No error". When the queue is full, the newest entry is replaced by
// -350,"Queue overflow" and later errors are lost until there is room again (the rule as
// we remember it from SCPI-1999 Vol 2 §21.8).

#include <cstddef>
#include <deque>
#include <string>

namespace zout::sim {

struct QueuedError {
  int code = 0;
  std::string message;  // the standard description, then ";detail" when there is detail
};

class ErrorQueue {
 public:
  // `capacity` >= 2 entries (one real entry plus room for the overflow marker).
  explicit ErrorQueue(std::size_t capacity = 16);

  // Adds an error; applies the overflow rule when the queue is full.
  void push(int code, const std::string& detail = {});
  // Removes and returns the oldest entry; {0, "No error"} when empty.
  QueuedError pop();
  // The reply to SYSTem:ERRor?: <code>,"<message>" with quotes inside doubled.
  static std::string format(const QueuedError& entry);

  void clear() { entries_.clear(); }
  bool empty() const { return entries_.empty(); }
  std::size_t size() const { return entries_.size(); }
  std::size_t capacity() const { return capacity_; }

 private:
  std::size_t capacity_;
  std::deque<QueuedError> entries_;
};

}  // namespace zout::sim
