#include "session.h"

#include <fmt/format.h>

#include "drivers/scpi/instrument_error.h"
#include "drivers/scpi/response.h"
#include "drivers/transport/io_error.h"

namespace zout {

Session::Session(std::unique_ptr<Transport> transport, std::chrono::milliseconds default_timeout)
    : transport_(std::move(transport)), default_timeout_(default_timeout) {}

void Session::ensure_open(Deadline deadline) {
  if (!transport_->is_open()) transport_->open(deadline);
}

void Session::write(std::string_view command) { write(command, default_timeout_); }

void Session::write(std::string_view command, std::chrono::milliseconds timeout) {
  const Deadline deadline = deadline_after(timeout);
  ensure_open(deadline);
  transport_->write_message(command, deadline);
}

std::string Session::query(std::string_view command) { return query(command, default_timeout_); }

std::string Session::query(std::string_view command, std::chrono::milliseconds timeout) {
  const Deadline deadline = deadline_after(timeout);
  ensure_open(deadline);
  transport_->discard_input();
  transport_->write_message(command, deadline);
  try {
    return transport_->read_line(deadline);
  } catch (const IoError& e) {
    throw IoError(e.kind(), fmt::format("{} (query \"{}\")", e.what(), escape_bytes(command)));
  }
}

namespace {

// Runs a parser on a reply, naming the instrument and the query when the reply is malformed.
template <typename Parse>
auto parse_reply(const std::string& address, const char* query, const std::string& reply, Parse parse) {
  try {
    return parse(reply);
  } catch (const IoError& e) {
    throw IoError(e.kind(), fmt::format("{}: {} (query \"{}\")", address, e.what(), query));
  }
}

}  // namespace

Identity Session::identify() {
  return parse_reply(address(), "*IDN?", query("*IDN?"), [](const std::string& r) { return parse_identity(r); });
}

void Session::clear_status() { write("*CLS"); }

void Session::reset() { write("*RST"); }

void Session::wait_complete(std::chrono::milliseconds timeout) {
  const std::string reply = query("*OPC?", timeout);
  // IEEE 488.2 §10.19: *OPC? answers the ASCII character "1" once pending operations end.
  if (parse_integer(reply) != 1) {
    throw IoError(IoErrorKind::protocol,
                  fmt::format("{}: *OPC? answered \"{}\", expected 1", address(), escape_bytes(reply)));
  }
}

std::vector<ErrorEntry> Session::drain_errors(int max_entries) {
  std::vector<ErrorEntry> entries;
  for (int i = 0; i < max_entries; ++i) {
    ErrorEntry entry = parse_reply(address(), "SYSTem:ERRor?", query("SYSTem:ERRor?"),
                                   [](const std::string& r) { return parse_error_entry(r); });
    if (entry.is_no_error()) return entries;
    entries.push_back(std::move(entry));
  }
  throw IoError(IoErrorKind::protocol,
                fmt::format("{}: error queue still not empty after {} reads of SYSTem:ERRor?", address(),
                            max_entries));
}

void Session::check_errors() {
  auto entries = drain_errors();
  if (entries.empty()) return;
  std::string all;
  for (const auto& entry : entries) {
    all += fmt::format("{}{},\"{}\"", all.empty() ? "" : "; ", entry.code, entry.message);
  }
  throw InstrumentError(entries.front(), fmt::format("{}: instrument reported {}", address(), all));
}

void Session::reconnect(std::chrono::milliseconds timeout) {
  transport_->close();
  transport_->open(deadline_after(timeout));
}

void Session::close() noexcept { transport_->close(); }

const std::string& Session::address() const { return transport_->address(); }

}  // namespace zout
