#pragma once
// The control socket (DEVELOPERS.md, "Control protocol"): JSON-RPC 2.0 on a Unix stream socket (mode 0660), one
// JSON object per line. Runs on one asio io_context thread. A request line over 1 MiB is
// refused and the connection closed; a client that stops reading is dropped once its
// unsent replies pass a bound, so no client can block a run or the daemon.

#include <chrono>
#include <cstddef>
#include <functional>
#include <memory>
#include <set>
#include <string>

#include <asio.hpp>
#include <nlohmann/json.hpp>

#include "daemon/api/json_rpc.h"

namespace zout {

class ControlServer {
 public:
  // Returns the result of one request or throws rpc::RpcError. `subscribe` marks the calling
  // connection to receive notifications.
  struct CallContext {
    std::function<void()> subscribe;
  };
  using Dispatch = std::function<nlohmann::json(const rpc::Request&, CallContext&)>;

  static constexpr std::size_t max_request_bytes = 1024 * 1024;
  static constexpr std::size_t max_pending_bytes = 8 * 1024 * 1024;
  // Connections served at once; one more is told so and closed. Well under the systemd
  // unit's LimitNOFILE, which also covers the instrument links and the database.
  static constexpr std::size_t max_clients = 256;
  // When accepting fails (no file descriptor left: EMFILE, ENFILE), the next try waits this long.
  static constexpr std::chrono::milliseconds accept_retry{100};

  ControlServer(asio::io_context& io, std::string socket_path, Dispatch dispatch);
  ~ControlServer();

  // Binds the socket (replacing a stale socket file nobody listens on; refusing when a live
  // daemon owns it), sets mode 0660 and starts accepting. Throws std::runtime_error.
  void start();
  // Stops accepting, closes every connection and removes the socket file.
  void stop();

  // Sends a notification to every subscribed connection. Safe from any thread.
  void broadcast(const std::string& method, const nlohmann::json& params);

 private:
  class Connection;
  void accept_next();

  asio::io_context& io_;
  std::string socket_path_;
  Dispatch dispatch_;
  asio::local::stream_protocol::acceptor acceptor_;
  asio::steady_timer accept_retry_timer_;
  bool accept_failing_ = false;  // logs a failing streak once, and its end
  std::set<std::shared_ptr<Connection>> connections_;
};

}  // namespace zout
