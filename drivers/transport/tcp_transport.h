#pragma once
// A Transport over TCP (instruments on a LAN, and zout-sim on loopback), on standalone asio.
// Each call runs asio's event loop only until its deadline; an operation still pending then
// is cancelled and reported as IoError(timeout). TCP_NODELAY is set so short SCPI commands
// leave at once. After a dropped link or a write timeout the transport is closed; open()
// reconnects cleanly.

#include <array>

#include <asio.hpp>

#include "address.h"
#include "io_error.h"
#include "line_framer.h"
#include "transport.h"

namespace zout {

class TcpTransport : public Transport {
 public:
  // `address` must hold a TcpEndpoint.
  explicit TcpTransport(Address address);
  ~TcpTransport() override;

  void open(Deadline deadline) override;
  void close() noexcept override;
  bool is_open() const override { return socket_.is_open(); }
  void write_message(std::string_view message, Deadline deadline) override;
  std::string read_line(Deadline deadline) override;
  void discard_input() override;
  const std::string& address() const override { return address_.text; }

 private:
  // Runs the event loop until `done` or the deadline; on the deadline cancels what is
  // pending, lets its handler finish, and returns false.
  bool run_until(const bool& done, Deadline deadline);
  [[noreturn]] void fail(IoErrorKind kind, const std::string& what);

  Address address_;
  TcpEndpoint endpoint_;
  asio::io_context io_;
  asio::ip::tcp::socket socket_;
  LineFramer framer_;
  std::array<char, 16 * 1024> chunk_{};
};

}  // namespace zout
