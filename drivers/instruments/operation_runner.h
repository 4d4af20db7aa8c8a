#pragma once
// Runs the operations of one dialect over one Session: sends the operation's rendered
// commands in order, then its rendered query, and reads the reply in the form the dialect
// declares. ScpiSource, ScpiMeter and ScpiLoad are thin layers over this.
// Every call may throw IoError or InstrumentError from the session underneath.

#include <chrono>
#include <optional>
#include <string>
#include <vector>

#include "drivers/instruments/dialect.h"
#include "drivers/scpi/response.h"
#include "drivers/scpi/session.h"

namespace zout {

class OperationRunner {
 public:
  using Timeout = std::optional<std::chrono::milliseconds>;  // none: the session's default

  // Throws DialectError unless `dialect` is for `role`. `session` must outlive the runner.
  OperationRunner(Session& session, Dialect dialect, const std::string& role);

  // Sends the operation's commands. If it also has a query (say *OPC? to wait for the
  // settings to take), that is sent too and its reply checked against the declared
  // response type, then dropped.
  void run(const std::string& name, const Dialect::Values& values = {});

  // Sends the commands, then the query; the reply read as a number times the operation's
  // scale. Special values (overload 9.91E37, infinities) are kept distinct, never scaled.
  ScpiNumber ask_number(const std::string& name, const Dialect::Values& values = {},
                        Timeout timeout = std::nullopt);
  // As ask_number, but a special value is an IoError(protocol).
  double ask_finite_number(const std::string& name, const Dialect::Values& values = {},
                           Timeout timeout = std::nullopt);
  // As ask_number for a comma-separated list; each element scaled.
  std::vector<ScpiNumber> ask_number_list(const std::string& name,
                                          const Dialect::Values& values = {},
                                          Timeout timeout = std::nullopt);
  // Sends the commands, then the query; the reply read as a boolean (1/0/ON/OFF).
  bool ask_boolean(const std::string& name, const Dialect::Values& values = {},
                   Timeout timeout = std::nullopt);

  const Dialect& dialect() const { return dialect_; }
  Session& session() const { return session_; }

 private:
  // Sends the commands and the query of `name` (whose response must be `expected`);
  // returns the raw reply.
  std::string exchange(const std::string& name, const Dialect::Values& values, Timeout timeout,
                       ResponseType expected);
  Session& session_;
  Dialect dialect_;
};

}  // namespace zout
