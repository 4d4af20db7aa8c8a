#pragma once
// An error the instrument itself reported in its error queue, with the address and the
// command context in the message ("tcp://127.0.0.1:5601: -113,\"Undefined header\" after ...").

#include <stdexcept>
#include <string>

#include "drivers/scpi/error_entry.h"

namespace zout {

class InstrumentError : public std::runtime_error {
 public:
  InstrumentError(ErrorEntry entry, const std::string& message)
      : std::runtime_error(message), entry_(std::move(entry)) {}
  const ErrorEntry& entry() const { return entry_; }
  int code() const { return entry_.code; }

 private:
  ErrorEntry entry_;
};

}  // namespace zout
