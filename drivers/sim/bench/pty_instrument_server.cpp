#include "pty_instrument_server.h"

#include <fcntl.h>
#include <pty.h>
#include <termios.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <system_error>

#include "asio_link_stream.h"

namespace zout::sim {

namespace {

[[noreturn]] void fail(const std::string& what) { throw std::system_error(errno, std::generic_category(), what); }

}  // namespace

PtyInstrumentServer::PtyInstrumentServer(asio::io_context& io, ScpiInstrument& instrument, const SimClock& clock,
                                         std::string link_path)
    : io_(io), instrument_(instrument), clock_(clock), link_path_(std::move(link_path)) {
  open_terminal();
}

PtyInstrumentServer::~PtyInstrumentServer() { stop(); }

void PtyInstrumentServer::open_terminal() {
  int master = -1;
  int slave = -1;
  char name[256] = {};
  if (::openpty(&master, &slave, name, nullptr, nullptr) != 0) fail("openpty");
  const int previous_keepalive = keepalive_fd_;
  // Raw mode: no echo, no line editing, no CR/LF translation; bytes pass as they are.
  termios tio{};
  ::tcgetattr(slave, &tio);
  ::cfmakeraw(&tio);
  ::cfsetispeed(&tio, B115200);
  ::cfsetospeed(&tio, B115200);
  ::tcsetattr(slave, TCSANOW, &tio);
  ::fcntl(master, F_SETFD, FD_CLOEXEC);
  ::fcntl(slave, F_SETFD, FD_CLOEXEC);
  keepalive_fd_ = slave;
  device_path_ = name;

  // Point the stable link at the new device: a new symlink renamed over the old one, so a
  // client never sees the path missing.
  const std::string temporary = link_path_ + ".new";
  ::unlink(temporary.c_str());
  if (::symlink(device_path_.c_str(), temporary.c_str()) != 0 || ::rename(temporary.c_str(), link_path_.c_str()) != 0) {
    const int error = errno;
    ::close(master);
    ::close(slave);
    keepalive_fd_ = previous_keepalive;
    errno = error;
    fail("cannot point " + link_path_ + " at " + device_path_);
  }

  // The old terminal hangs up once its link closes its master; our slave end goes now.
  if (previous_keepalive >= 0) ::close(previous_keepalive);

  asio::posix::stream_descriptor stream(io_, master);
  retired_link_ = std::move(link_);
  link_ = std::make_shared<InstrumentLink>(
      io_, std::make_unique<AsioLinkStream<asio::posix::stream_descriptor>>(std::move(stream)), instrument_, clock_,
      [this] {
        // The link is closing (a drop fault hangs the terminal up): the new terminal is in
        // place behind the link path before the client sees the hang-up.
        if (stopped_) return;
        try {
          open_terminal();
        } catch (const std::exception& e) {
          std::fprintf(stderr, "zout-sim: %s: cannot open a new pseudo-terminal: %s\n", link_path_.c_str(), e.what());
        }
      });
  link_->start();
}

void PtyInstrumentServer::stop() {
  if (stopped_) return;
  stopped_ = true;
  if (link_) link_->close();
  link_.reset();
  retired_link_.reset();
  if (keepalive_fd_ >= 0) ::close(keepalive_fd_);
  keepalive_fd_ = -1;
  ::unlink(link_path_.c_str());
}

}  // namespace zout::sim
