#pragma once
// The control channel of the simulated bench: JSON lines on a loopback TCP port of its own,
// for tests and the demo (never for the daemon, which sees only the instruments). Each line a
// client sends is one JSON object; each gets exactly one JSON line back. A line that is not a
// JSON object gets {"ok": false, "error": "..."}; the handler answers the rest. Any number of
// clients may be connected at once. Requests: drivers/sim/README.md.

#include <cstdint>
#include <functional>
#include <memory>
#include <vector>

#include <asio.hpp>
#include <nlohmann/json.hpp>

namespace zout::sim {

class ControlServer {
 public:
  using Handler = std::function<nlohmann::json(const nlohmann::json& request)>;
  static constexpr std::size_t max_line_bytes = 64 * 1024;

  // Listens on 127.0.0.1:`port` (0 = a free port). Throws std::system_error when it cannot.
  ControlServer(asio::io_context& io, std::uint16_t port, Handler handler);
  ~ControlServer();

  std::uint16_t port() const { return port_; }
  void stop();

 private:
  class Session;
  void accept();

  asio::ip::tcp::acceptor acceptor_;
  std::uint16_t port_ = 0;
  Handler handler_;
  std::vector<std::weak_ptr<Session>> sessions_;
};

}  // namespace zout::sim
