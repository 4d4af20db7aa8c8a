#include "operation_runner.h"

#include <stdexcept>
#include <utility>

#include <fmt/format.h>

#include "drivers/instruments/dialect_error.h"
#include "drivers/transport/io_error.h"

namespace zout {

namespace {

// `number` times `scale`; a special value stays special (an infinity changes sign with a
// negative scale).
ScpiNumber scaled(ScpiNumber number, double scale) {
  using Kind = ScpiNumber::Kind;
  if (number.is_number()) {
    number.value *= scale;
  } else if (scale < 0.0 && number.kind == Kind::plus_infinity) {
    number.kind = Kind::minus_infinity;
  } else if (scale < 0.0 && number.kind == Kind::minus_infinity) {
    number.kind = Kind::plus_infinity;
  }
  return number;
}

// Runs `parse` on `reply`; a parse failure is re-thrown naming the address and operation.
template <typename Parse>
auto parse_reply(const Session& session, const std::string& name, const std::string& reply,
                 Parse parse) {
  try {
    return parse(reply);
  } catch (const IoError& e) {
    throw IoError(e.kind(), fmt::format("{}: reply to {}: {}", session.address(), name, e.what()));
  }
}

}  // namespace

OperationRunner::OperationRunner(Session& session, Dialect dialect, const std::string& role)
    : session_(session), dialect_(std::move(dialect)) {
  if (dialect_.role() != role) {
    throw DialectError(fmt::format("{}: dialect is for role \"{}\"; a {} needs role \"{}\"",
                                   dialect_.origin(), dialect_.role(), role, role));
  }
}

void OperationRunner::run(const std::string& name, const Dialect::Values& values) {
  for (const auto& command : dialect_.render_send(name, values)) session_.write(command);
  const auto& op = dialect_.operation(name);
  if (!op.query) return;
  const std::string reply = session_.query(dialect_.render_query(name, values));
  switch (op.response) {
    case ResponseType::number: parse_reply(session_, name, reply, parse_number); break;
    case ResponseType::number_list: parse_reply(session_, name, reply, parse_number_list); break;
    case ResponseType::boolean: parse_reply(session_, name, reply, parse_boolean); break;
    case ResponseType::integer: parse_reply(session_, name, reply, parse_integer); break;
    case ResponseType::string: break;  // any text will do
  }
}

std::string OperationRunner::exchange(const std::string& name, const Dialect::Values& values,
                                      Timeout timeout, ResponseType expected) {
  const auto& op = dialect_.operation(name);
  if (!op.query || op.response != expected) {
    throw std::logic_error(fmt::format("{}: operation \"{}\" does not answer \"{}\"",
                                       dialect_.origin(), name, to_string(expected)));
  }
  for (const auto& command : dialect_.render_send(name, values)) session_.write(command);
  const std::string query = dialect_.render_query(name, values);
  return timeout ? session_.query(query, *timeout) : session_.query(query);
}

ScpiNumber OperationRunner::ask_number(const std::string& name, const Dialect::Values& values,
                                       Timeout timeout) {
  const std::string reply = exchange(name, values, timeout, ResponseType::number);
  return scaled(parse_reply(session_, name, reply, parse_number), dialect_.operation(name).scale);
}

double OperationRunner::ask_finite_number(const std::string& name, const Dialect::Values& values,
                                          Timeout timeout) {
  const std::string reply = exchange(name, values, timeout, ResponseType::number);
  return parse_reply(session_, name, reply, parse_finite_number) * dialect_.operation(name).scale;
}

std::vector<ScpiNumber> OperationRunner::ask_number_list(const std::string& name,
                                                         const Dialect::Values& values,
                                                         Timeout timeout) {
  const std::string reply = exchange(name, values, timeout, ResponseType::number_list);
  auto numbers = parse_reply(session_, name, reply, parse_number_list);
  for (auto& number : numbers) number = scaled(number, dialect_.operation(name).scale);
  return numbers;
}

bool OperationRunner::ask_boolean(const std::string& name, const Dialect::Values& values,
                                  Timeout timeout) {
  const std::string reply = exchange(name, values, timeout, ResponseType::boolean);
  return parse_reply(session_, name, reply, parse_boolean);
}

}  // namespace zout
