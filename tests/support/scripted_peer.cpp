#include "scripted_peer.h"

#include <arpa/inet.h>
#include <fcntl.h>
#include <netinet/in.h>
#include <poll.h>
#include <pty.h>
#include <sys/socket.h>
#include <termios.h>
#include <unistd.h>

#include <cerrno>
#include <chrono>
#include <stdexcept>

#include <fmt/format.h>

namespace zout::test {

ScriptedPeer::ScriptedPeer(Link link, PeerHandler handler) : link_(link), handler_(std::move(handler)) {
  if (::pipe(stop_pipe_) != 0) throw std::runtime_error("pipe failed");
  if (link_ == Link::tcp) {
    listen_fd_ = ::socket(AF_INET, SOCK_STREAM | SOCK_CLOEXEC, 0);
    int yes = 1;
    ::setsockopt(listen_fd_, SOL_SOCKET, SO_REUSEADDR, &yes, sizeof yes);
    sockaddr_in addr{};
    addr.sin_family = AF_INET;
    addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
    addr.sin_port = 0;
    if (::bind(listen_fd_, reinterpret_cast<sockaddr*>(&addr), sizeof addr) != 0 || ::listen(listen_fd_, 4) != 0) {
      throw std::runtime_error("cannot listen on loopback");
    }
    socklen_t len = sizeof addr;
    ::getsockname(listen_fd_, reinterpret_cast<sockaddr*>(&addr), &len);
    address_ = fmt::format("tcp://127.0.0.1:{}", ntohs(addr.sin_port));
  } else {
    char name[256] = {};
    if (::openpty(&master_fd_, &slave_keepalive_fd_, name, nullptr, nullptr) != 0) {
      throw std::runtime_error("openpty failed");
    }
    termios tio{};
    ::tcgetattr(slave_keepalive_fd_, &tio);
    ::cfmakeraw(&tio);
    ::tcsetattr(slave_keepalive_fd_, TCSANOW, &tio);
    ::fcntl(master_fd_, F_SETFL, ::fcntl(master_fd_, F_GETFL) | O_NONBLOCK);
    device_path_ = name;
    address_ = fmt::format("serial://{}?baud=115200", device_path_);
  }
  thread_ = std::thread([this] { serve(); });
}

ScriptedPeer::~ScriptedPeer() {
  const char stop = 'x';
  [[maybe_unused]] auto written = ::write(stop_pipe_[1], &stop, 1);
  thread_.join();
  for (int fd : {listen_fd_, master_fd_, slave_keepalive_fd_, stop_pipe_[0], stop_pipe_[1]}) {
    if (fd >= 0) ::close(fd);
  }
}

std::vector<std::string> ScriptedPeer::received() const {
  std::lock_guard lock(mutex_);
  return received_;
}

void ScriptedPeer::serve() {
  if (link_ == Link::pseudo_terminal) {
    links_accepted_ = 1;
    serve_link(master_fd_);
    return;
  }
  for (;;) {
    pollfd fds[2] = {{listen_fd_, POLLIN, 0}, {stop_pipe_[0], POLLIN, 0}};
    if (::poll(fds, 2, -1) < 0) continue;
    if (fds[1].revents) return;
    const int fd = ::accept4(listen_fd_, nullptr, nullptr, SOCK_CLOEXEC);
    if (fd < 0) continue;
    ++links_accepted_;
    serve_link(fd);
    ::close(fd);
  }
}

void ScriptedPeer::serve_link(int fd) {
  std::string pending;
  char chunk[65536];
  for (;;) {
    pollfd fds[2] = {{fd, POLLIN, 0}, {stop_pipe_[0], POLLIN, 0}};
    if (::poll(fds, 2, -1) < 0) continue;
    if (fds[1].revents) return;
    const ssize_t n = ::read(fd, chunk, sizeof chunk);
    if (n < 0 && (errno == EAGAIN || errno == EINTR)) continue;
    if (n <= 0) {
      if (link_ == Link::pseudo_terminal) {  // slave closed by the client: wait for the next open
        pollfd stop{stop_pipe_[0], POLLIN, 0};
        if (::poll(&stop, 1, 20) > 0) return;
        continue;
      }
      return;
    }
    pending.append(chunk, static_cast<std::size_t>(n));
    for (auto end = pending.find('\n'); end != std::string::npos; end = pending.find('\n')) {
      std::string line = pending.substr(0, end);
      pending.erase(0, end + 1);
      if (!line.empty() && line.back() == '\r') line.pop_back();
      {
        std::lock_guard lock(mutex_);
        received_.push_back(line);
      }
      if (!act(fd, handler_(line))) return;
    }
  }
}

bool ScriptedPeer::send_all(int fd, std::string_view bytes) {
  while (!bytes.empty()) {
    const ssize_t n = ::write(fd, bytes.data(), bytes.size());
    if (n > 0) {
      bytes.remove_prefix(static_cast<std::size_t>(n));
    } else if (n < 0 && (errno == EAGAIN || errno == EINTR)) {
      pollfd fds[2] = {{fd, POLLOUT, 0}, {stop_pipe_[0], POLLIN, 0}};
      ::poll(fds, 2, 100);
      if (fds[1].revents) return false;  // the test is over; stop writing into a full link
    } else {
      return false;  // the client went away; the test sees that on its side
    }
  }
  return true;
}

bool ScriptedPeer::act(int fd, const PeerAction& action) {
  switch (action.kind) {
    case PeerAction::Kind::silent: return true;
    case PeerAction::Kind::reply: return send_all(fd, action.bytes);
    case PeerAction::Kind::reply_bytewise:
      for (char c : action.bytes) {
        if (!send_all(fd, std::string_view(&c, 1))) return false;
        std::this_thread::sleep_for(std::chrono::milliseconds(2));
      }
      return true;
    case PeerAction::Kind::send_then_close:
      send_all(fd, action.bytes);
      // Give the client time to receive the partial reply before the link drops, as when
      // a cable is pulled mid-reply (a pty hang-up would otherwise flush unread bytes).
      std::this_thread::sleep_for(std::chrono::milliseconds(50));
      if (link_ == Link::pseudo_terminal) {
        // Hang up the pseudo-terminal: the client's reads then fail with EIO.
        ::close(master_fd_);
        ::close(slave_keepalive_fd_);
        master_fd_ = -1;
        slave_keepalive_fd_ = -1;
      } else {
        ::shutdown(fd, SHUT_RDWR);
      }
      return false;
  }
  return true;
}

PeerHandler simple_instrument(std::string terminator) {
  return [terminator](const std::string& line) {
    if (line == "*IDN?") return PeerAction::reply("Testbench Labs,PEER-1,SN0042,1.0.3" + terminator);
    if (line == "MEAS:VOLT?") return PeerAction::reply("+1.23450000E+03" + terminator);
    if (line == "SYST:ERR?" || line == "SYSTem:ERRor?") return PeerAction::reply("0,\"No error\"" + terminator);
    if (line == "*OPC?") return PeerAction::reply("1" + terminator);
    return PeerAction::silence();
  };
}

}  // namespace zout::test
