#include "bench_connection.h"

#include <fmt/format.h>

#include <stdexcept>

#include "drivers/instruments/dialect.h"
#include "drivers/transport/address.h"
#include "drivers/transport/io_error.h"
#include "drivers/transport/transport_factory.h"

namespace zout {
namespace {

std::unique_ptr<Session> open_session(const InstrumentConfig& config) {
  return std::make_unique<Session>(make_transport(parse_address(config.address)), config.timeout);
}

}  // namespace

BenchConnection::BenchConnection(const BenchConfig& bench) {
  links_.push_back({"source", bench.source.timeout, open_session(bench.source)});
  links_.push_back({"meter", bench.meter.timeout, open_session(bench.meter)});
  links_.push_back({"load", bench.load.timeout, open_session(bench.load)});
  source_ = std::make_unique<ScpiSource>(*links_[0].session, Dialect::load_file(bench.source.dialect_path));
  meter_ = std::make_unique<ScpiMeter>(*links_[1].session, Dialect::load_file(bench.meter.dialect_path));
  load_ = std::make_unique<ScpiLoad>(*links_[2].session, Dialect::load_file(bench.load.dialect_path));
  if (bench.panel_switch) {
    links_.push_back({"switch", bench.panel_switch->timeout, open_session(*bench.panel_switch)});
    switch_ = std::make_unique<ScpiSwitch>(*links_[3].session, Dialect::load_file(bench.panel_switch->dialect_path));
  }
}

BenchConnection::Link& BenchConnection::link(const std::string& role) {
  for (auto& l : links_) {
    if (l.role == role) return l;
  }
  throw std::invalid_argument("bench has no instrument in role " + role);
}

Session& BenchConnection::session(const std::string& role) { return *link(role).session; }

std::vector<std::string> BenchConnection::roles() const {
  std::vector<std::string> out;
  for (const auto& l : links_) out.push_back(l.role);
  return out;
}

std::vector<ConnectedInstrument> BenchConnection::connect() {
  std::vector<ConnectedInstrument> found;
  for (auto& l : links_) {
    try {
      const Identity identity = l.session->identify();
      auto stale = l.session->drain_errors();
      l.session->clear_status();
      found.push_back({l.role, l.session->address(), identity, std::move(stale)});
    } catch (const IoError& e) {
      throw IoError(e.kind(), fmt::format("{}: {}", l.role, e.what()));
    }
  }
  return found;
}

std::vector<std::string> BenchConnection::enter_safe_state() noexcept {
  std::vector<std::string> failures;
  // Each command is confirmed with *OPC? (IEEE 488.2 §10.19): a write into a link that has
  // just dropped can look sent. On failure the link is reopened and the command sent again.
  const auto attempt = [this, &failures](const std::string& role, const auto& action) {
    for (int tries = 0;; ++tries) {
      try {
        action();
        Link& l = link(role);
        l.session->wait_complete(l.timeout);
        return;
      } catch (const std::exception& e) {
        if (tries == 1) {
          failures.push_back(fmt::format("{}: {}", role, e.what()));
          return;
        }
        try {
          reconnect(role);
        } catch (const std::exception&) {
          // The retry reports the failure.
        }
      }
    }
  };
  attempt("load", [this] { load_->set_input(false); });
  attempt("source", [this] { source_->set_output(false); });
  if (switch_) attempt("switch", [this] { switch_->open_all(); });
  return failures;
}

void BenchConnection::reconnect(const std::string& role) {
  Link& l = link(role);
  try {
    l.session->reconnect(l.timeout);
    l.session->clear_status();
  } catch (const IoError& e) {
    throw IoError(e.kind(), fmt::format("{}: {}", role, e.what()));
  }
}

std::vector<std::string> BenchConnection::drain_all_errors() {
  std::vector<std::string> lines;
  for (auto& l : links_) {
    for (const auto& entry : l.session->drain_errors()) {
      lines.push_back(fmt::format("{}: {},\"{}\"", l.role, entry.code, entry.message));
    }
  }
  return lines;
}

}  // namespace zout
