#include "control_client.h"

#include <poll.h>
#include <sys/socket.h>
#include <sys/un.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>

#include <fmt/format.h>

namespace zout {

ControlClient::ControlClient(const std::string& socket_path) : socket_path_(socket_path) {
  sockaddr_un address{};
  address.sun_family = AF_UNIX;
  if (socket_path.size() >= sizeof(address.sun_path)) {
    throw std::runtime_error(fmt::format("control socket path too long: {}", socket_path));
  }
  std::strcpy(address.sun_path, socket_path.c_str());
  fd_ = ::socket(AF_UNIX, SOCK_STREAM | SOCK_CLOEXEC, 0);
  if (fd_ < 0 || ::connect(fd_, reinterpret_cast<sockaddr*>(&address), sizeof address) != 0) {
    const std::string reason = std::strerror(errno);
    if (fd_ >= 0) ::close(fd_);
    fd_ = -1;
    throw DaemonUnreachable(fmt::format(
        "cannot reach zoutd at {} ({}); is it running? Start it with `zoutd --bench BENCH.json` or "
        "`systemctl start zoutd`",
        socket_path, reason));
  }
}

ControlClient::~ControlClient() {
  if (fd_ >= 0) ::close(fd_);
}

void ControlClient::send_line(const std::string& line) {
  std::string framed = line + "\n";
  std::size_t sent = 0;
  while (sent < framed.size()) {
    const ssize_t n = ::send(fd_, framed.data() + sent, framed.size() - sent, MSG_NOSIGNAL);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) throw std::runtime_error(fmt::format("zoutd at {} closed the connection", socket_path_));
    sent += static_cast<std::size_t>(n);
  }
}

std::optional<nlohmann::json> ControlClient::read_message(std::chrono::steady_clock::time_point deadline) {
  for (;;) {
    const auto newline = buffer_.find('\n');
    if (newline != std::string::npos) {
      const std::string line = buffer_.substr(0, newline);
      buffer_.erase(0, newline + 1);
      return nlohmann::json::parse(line);
    }
    const auto left = std::chrono::ceil<std::chrono::milliseconds>(deadline - std::chrono::steady_clock::now());
    if (left.count() <= 0) return std::nullopt;
    pollfd waiting{fd_, POLLIN, 0};
    const int ready = ::poll(&waiting, 1, static_cast<int>(left.count()));
    if (ready < 0 && errno == EINTR) continue;
    if (ready == 0) return std::nullopt;
    char chunk[65536];
    const ssize_t n = ::recv(fd_, chunk, sizeof chunk, 0);
    if (n <= 0) throw std::runtime_error(fmt::format("zoutd at {} closed the connection", socket_path_));
    buffer_.append(chunk, static_cast<std::size_t>(n));
  }
}

nlohmann::json ControlClient::call_raw(const std::string& line, std::chrono::milliseconds timeout) {
  try {
    send_line(line);
  } catch (const std::runtime_error&) {
    // zoutd may have refused the connection (too many clients) and closed it before this line
    // went out: its one-line refusal is then waiting to be read, and says more than EPIPE.
    try {
      if (auto refusal = read_message(std::chrono::steady_clock::now() + std::chrono::milliseconds(200))) return *refusal;
    } catch (const std::exception&) {
      // nothing was waiting
    }
    throw;
  }
  const auto deadline = std::chrono::steady_clock::now() + timeout;
  for (;;) {
    auto message = read_message(deadline);
    if (!message) throw std::runtime_error(fmt::format("zoutd at {} did not answer in time", socket_path_));
    if (message->contains("method") && !message->contains("id")) {
      notifications_.push_back(std::move(*message));
      continue;
    }
    return *message;
  }
}

nlohmann::json ControlClient::call(const std::string& method, const nlohmann::json& params,
                                   std::chrono::milliseconds timeout) {
  const long long id = next_id_++;
  const nlohmann::json request = {{"jsonrpc", "2.0"}, {"id", id}, {"method", method}, {"params", params}};
  const nlohmann::json response = call_raw(request.dump(), timeout);
  if (response.contains("error")) {
    const auto& error = response["error"];
    throw ControlCallError(error.value("code", 0), error.value("message", std::string("error")));
  }
  return response.value("result", nlohmann::json());
}

std::optional<nlohmann::json> ControlClient::next_notification(std::chrono::milliseconds timeout) {
  if (!notifications_.empty()) {
    auto front = std::move(notifications_.front());
    notifications_.pop_front();
    return front;
  }
  const auto deadline = std::chrono::steady_clock::now() + timeout;
  for (;;) {
    auto message = read_message(deadline);
    if (!message) return std::nullopt;
    if (message->contains("method") && !message->contains("id")) return message;
    // A response nobody waits for (cannot happen with one call at a time): drop it.
  }
}

}  // namespace zout
