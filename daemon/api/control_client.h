#pragma once
// A client of zoutd's control socket: JSON-RPC 2.0, one JSON object per line over a Unix
// stream socket. Calls wait for their own response before a deadline; notifications that
// arrive meanwhile (after events.subscribe) are queued for next_notification().

#include <chrono>
#include <deque>
#include <optional>
#include <stdexcept>
#include <string>

#include <nlohmann/json.hpp>

namespace zout {

// The daemon answered with a JSON-RPC error object.
class ControlCallError : public std::runtime_error {
 public:
  ControlCallError(int code, const std::string& message) : std::runtime_error(message), code_(code) {}
  int code() const { return code_; }

 private:
  int code_;
};

// Nobody listens on the control socket: zoutd is not running (or the path is wrong).
class DaemonUnreachable : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

class ControlClient {
 public:
  // Connects to the socket; throws DaemonUnreachable saying how to start zoutd when nobody
  // listens there.
  explicit ControlClient(const std::string& socket_path);
  ~ControlClient();
  ControlClient(const ControlClient&) = delete;
  ControlClient& operator=(const ControlClient&) = delete;

  // Sends one request and returns its result; throws ControlCallError for an error
  // response, std::runtime_error on timeout or a dropped connection.
  nlohmann::json call(const std::string& method, const nlohmann::json& params,
                      std::chrono::milliseconds timeout = std::chrono::seconds(10));

  // Sends raw bytes (tests of malformed input) and returns the next non-notification line.
  nlohmann::json call_raw(const std::string& line, std::chrono::milliseconds timeout = std::chrono::seconds(10));

  // The next notification, waiting up to `timeout`; nothing when none arrived in time.
  std::optional<nlohmann::json> next_notification(std::chrono::milliseconds timeout);

 private:
  std::optional<nlohmann::json> read_message(std::chrono::steady_clock::time_point deadline);
  void send_line(const std::string& line);

  int fd_ = -1;
  std::string socket_path_;
  std::string buffer_;
  std::deque<nlohmann::json> notifications_;
  long long next_id_ = 1;
};

}  // namespace zout
