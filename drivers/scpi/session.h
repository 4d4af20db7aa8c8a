#pragma once
// An SCPI conversation with one instrument over one Transport. Every call has a deadline
// (the per-call timeout, or the session's default); failures throw IoError (timeout,
// disconnected, protocol) or InstrumentError (an entry read from the error queue).

#include <chrono>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "drivers/scpi/error_entry.h"
#include "drivers/scpi/identity.h"
#include "drivers/transport/transport.h"

namespace zout {

class Session {
 public:
  // Takes ownership of `transport`; opens it lazily on the first call if it is not open.
  Session(std::unique_ptr<Transport> transport, std::chrono::milliseconds default_timeout);

  // Sends one program message (one or more commands joined by ';'); no reply is read.
  void write(std::string_view command);
  void write(std::string_view command, std::chrono::milliseconds timeout);

  // Sends a query and returns its one-line reply (terminator removed). Any stale input
  // (a late reply to an earlier, timed-out query) is discarded before sending.
  std::string query(std::string_view command);
  std::string query(std::string_view command, std::chrono::milliseconds timeout);

  // IEEE 488.2 common commands.
  Identity identify();                                  // *IDN?
  void clear_status();                                  // *CLS
  void reset();                                         // *RST
  void wait_complete(std::chrono::milliseconds timeout);  // *OPC? must answer 1

  // Reads SYSTem:ERRor? until 0,"No error"; returns the entries read (oldest first).
  // Bounded by max_entries so a broken instrument cannot keep it looping: past that it
  // throws IoError(protocol).
  std::vector<ErrorEntry> drain_errors(int max_entries = 64);
  // drain_errors(), then throws InstrumentError for the first entry if there were any.
  void check_errors();

  // Closes and re-opens the link before the deadline (after a timeout or dropped link).
  void reconnect(std::chrono::milliseconds timeout);
  void close() noexcept;

  const std::string& address() const;
  std::chrono::milliseconds default_timeout() const { return default_timeout_; }

 private:
  void ensure_open(Deadline deadline);

  std::unique_ptr<Transport> transport_;
  std::chrono::milliseconds default_timeout_;
};

}  // namespace zout
