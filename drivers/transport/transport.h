#pragma once
// The one interface every link to an instrument implements (TCP, serial, pseudo-terminal).
// Messages are text lines: write_message appends the terminator; read_line returns one line
// without it. Every blocking call takes a deadline and throws IoError (timeout, disconnected,
// protocol, open_failed) rather than blocking past it.

#include <string>
#include <string_view>

#include "deadline.h"

namespace zout {

class Transport {
 public:
  virtual ~Transport() = default;

  // Opens (or re-opens, after close or a failure) the link before `deadline`.
  virtual void open(Deadline deadline) = 0;
  // Closes the link; safe to call when already closed. Drops any buffered input.
  virtual void close() noexcept = 0;
  virtual bool is_open() const = 0;

  // Sends `message` followed by the configured terminator, all of it before `deadline`.
  virtual void write_message(std::string_view message, Deadline deadline) = 0;
  // Returns the next complete line (terminator and a trailing CR removed) before `deadline`.
  virtual std::string read_line(Deadline deadline) = 0;
  // Discards input already received or waiting in the OS (a late reply after a timeout),
  // without waiting for more.
  virtual void discard_input() = 0;

  // The address this transport was made from, for messages ("tcp://127.0.0.1:5601").
  virtual const std::string& address() const = 0;
};

}  // namespace zout
