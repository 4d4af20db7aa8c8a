#include "serial_transport.h"

#include <fcntl.h>
#include <libserialport.h>
#include <poll.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <sys/sysmacros.h>
#include <termios.h>
#include <unistd.h>

#include <cerrno>
#include <climits>
#include <cstdlib>
#include <cstring>

#include <fmt/format.h>

#include "io_error.h"
#include "serial_ports.h"

namespace zout {
namespace {

std::string libserialport_message() {
  char* message = sp_last_error_message();
  std::string text = message ? message : "unknown error";
  sp_free_error_message(message);
  while (!text.empty() && (text.back() == '\n' || text.back() == '\r')) text.pop_back();
  return text;
}

speed_t termios_speed(int baud) {
  switch (baud) {
    case 50: return B50;
    case 75: return B75;
    case 110: return B110;
    case 134: return B134;
    case 150: return B150;
    case 200: return B200;
    case 300: return B300;
    case 600: return B600;
    case 1200: return B1200;
    case 1800: return B1800;
    case 2400: return B2400;
    case 4800: return B4800;
    case 9600: return B9600;
    case 19200: return B19200;
    case 38400: return B38400;
    case 57600: return B57600;
    case 115200: return B115200;
    case 230400: return B230400;
    case 460800: return B460800;
    default: return B0;  // parse_address admits only the rates above
  }
}

}  // namespace

bool is_pseudo_terminal(const std::string& device_path) {
  struct stat info {};
  if (::stat(device_path.c_str(), &info) != 0 || !S_ISCHR(info.st_mode)) return false;
  // Unix98 pty slaves use character-device majors 136..143 (Linux devices.txt).
  const auto major_number = major(info.st_rdev);
  return major_number >= 136 && major_number <= 143;
}

SerialTransport::SerialTransport(Address address)
    : address_(std::move(address)),
      endpoint_(std::get<SerialEndpoint>(address_.endpoint)),
      framer_(address_.framing) {}

SerialTransport::~SerialTransport() { close(); }

void SerialTransport::fail(IoErrorKind kind, const std::string& what) {
  throw IoError(kind, fmt::format("{}: {}", address_.text, what));
}

void SerialTransport::open(Deadline) {
  // Opening a local device does not block, so the deadline is not needed here.
  close();
  if (!endpoint_.usb_serial.empty()) {
    std::optional<std::string> found;
    try {
      found = find_usb_serial_port(endpoint_.usb_serial);
    } catch (const std::exception& e) {
      fail(IoErrorKind::open_failed, e.what());
    }
    if (!found) {
      fail(IoErrorKind::open_failed,
           fmt::format("no USB serial adapter with serial number {} is connected (see `zout ports`)",
                       endpoint_.usb_serial));
    }
    device_path_ = *found;
  } else {
    device_path_ = endpoint_.device_path;
  }

  struct stat info {};
  if (::stat(device_path_.c_str(), &info) != 0) {
    fail(IoErrorKind::open_failed, fmt::format("serial device {} does not exist ({})", device_path_,
                                               std::strerror(errno)));
  }
  if (is_pseudo_terminal(device_path_)) {
    open_pseudo_terminal();
  } else {
    open_with_libserialport();
  }
  framer_.clear();
}

void SerialTransport::lock_port() {
  if (::flock(fd_, LOCK_EX | LOCK_NB) != 0) {
    const int error = errno;
    const std::string path = device_path_;
    close();
    if (error == EWOULDBLOCK) {
      fail(IoErrorKind::open_failed,
           fmt::format("serial device {} is busy: another program holds it open (lock held)", path));
    }
    fail(IoErrorKind::open_failed, fmt::format("cannot lock serial device {}: {}", path, std::strerror(error)));
  }
}

void SerialTransport::open_pseudo_terminal() {
  fd_ = ::open(device_path_.c_str(), O_RDWR | O_NOCTTY | O_NONBLOCK | O_CLOEXEC);
  if (fd_ < 0) {
    fail(IoErrorKind::open_failed, fmt::format("cannot open {}: {}", device_path_, std::strerror(errno)));
  }
  lock_port();

  const auto& settings = endpoint_.settings;
  termios tio {};
  if (::tcgetattr(fd_, &tio) != 0) {
    const int error = errno;
    close();
    fail(IoErrorKind::open_failed, fmt::format("cannot read line settings of {}: {}", device_path_,
                                               std::strerror(error)));
  }
  ::cfmakeraw(&tio);
  ::cfsetispeed(&tio, termios_speed(settings.baud));
  ::cfsetospeed(&tio, termios_speed(settings.baud));
  tio.c_cflag &= ~static_cast<tcflag_t>(CSIZE | PARENB | PARODD | CMSPAR | CSTOPB | CRTSCTS);
  tio.c_cflag |= CLOCAL | CREAD;
  switch (settings.data_bits) {
    case 5: tio.c_cflag |= CS5; break;
    case 6: tio.c_cflag |= CS6; break;
    case 7: tio.c_cflag |= CS7; break;
    default: tio.c_cflag |= CS8; break;
  }
  switch (settings.parity) {
    case Parity::none: break;
    case Parity::odd: tio.c_cflag |= PARENB | PARODD; break;
    case Parity::even: tio.c_cflag |= PARENB; break;
    case Parity::mark: tio.c_cflag |= PARENB | PARODD | CMSPAR; break;
    case Parity::space: tio.c_cflag |= PARENB | CMSPAR; break;
  }
  if (settings.stop_bits == 2) tio.c_cflag |= CSTOPB;
  tio.c_iflag &= ~static_cast<tcflag_t>(IXON | IXOFF | IXANY);
  if (settings.flow == FlowControl::rts_cts) tio.c_cflag |= CRTSCTS;
  if (settings.flow == FlowControl::xon_xoff) tio.c_iflag |= IXON | IXOFF;
  // dtr_dsr has no termios equivalent; a pseudo-terminal has no modem lines anyway.
  if (::tcsetattr(fd_, TCSANOW, &tio) != 0) {
    const int error = errno;
    close();
    fail(IoErrorKind::open_failed, fmt::format("cannot apply line settings to {}: {}", device_path_,
                                               std::strerror(error)));
  }
}

void SerialTransport::open_with_libserialport() {
  if (sp_get_port_by_name(device_path_.c_str(), &port_) != SP_OK) {
    port_ = nullptr;
    fail(IoErrorKind::open_failed,
         fmt::format("{} is not a serial port libserialport can use ({})", device_path_, libserialport_message()));
  }
  if (sp_open(port_, SP_MODE_READ_WRITE) != SP_OK) {
    const int error = sp_last_error_code();
    const std::string message = libserialport_message();
    sp_free_port(port_);
    port_ = nullptr;
    if (error == EBUSY) {
      fail(IoErrorKind::open_failed, fmt::format("serial device {} is busy: {}", device_path_, message));
    }
    fail(IoErrorKind::open_failed, fmt::format("cannot open serial device {}: {}", device_path_, message));
  }
  int handle = -1;
  sp_get_port_handle(port_, &handle);
  fd_ = handle;
  lock_port();

  const auto& settings = endpoint_.settings;
  const auto check = [&](sp_return result, const char* what) {
    if (result != SP_OK) {
      const std::string message = result == SP_ERR_FAIL ? libserialport_message() : "not supported";
      close();
      fail(IoErrorKind::open_failed, fmt::format("cannot set {} on {}: {}", what, device_path_, message));
    }
  };
  check(sp_set_baudrate(port_, settings.baud), "baud rate");
  check(sp_set_bits(port_, settings.data_bits), "data bits");
  sp_parity parity = SP_PARITY_NONE;
  switch (settings.parity) {
    case Parity::none: parity = SP_PARITY_NONE; break;
    case Parity::odd: parity = SP_PARITY_ODD; break;
    case Parity::even: parity = SP_PARITY_EVEN; break;
    case Parity::mark: parity = SP_PARITY_MARK; break;
    case Parity::space: parity = SP_PARITY_SPACE; break;
  }
  check(sp_set_parity(port_, parity), "parity");
  check(sp_set_stopbits(port_, settings.stop_bits), "stop bits");
  sp_flowcontrol flow = SP_FLOWCONTROL_NONE;
  switch (settings.flow) {
    case FlowControl::none: flow = SP_FLOWCONTROL_NONE; break;
    case FlowControl::rts_cts: flow = SP_FLOWCONTROL_RTSCTS; break;
    case FlowControl::xon_xoff: flow = SP_FLOWCONTROL_XONXOFF; break;
    case FlowControl::dtr_dsr: flow = SP_FLOWCONTROL_DTRDSR; break;
  }
  check(sp_set_flowcontrol(port_, flow), "flow control");
}

void SerialTransport::close() noexcept {
  if (port_ != nullptr) {
    sp_close(port_);  // closes fd_ too
    sp_free_port(port_);
    port_ = nullptr;
  } else if (fd_ >= 0) {
    ::close(fd_);
  }
  fd_ = -1;
  framer_.clear();
}

void SerialTransport::write_message(std::string_view message, Deadline deadline) {
  if (!is_open()) fail(IoErrorKind::disconnected, "not open");
  std::string framed(message);
  framed += framer_.terminator();
  std::string_view rest = framed;
  while (!rest.empty()) {
    const ssize_t n = ::write(fd_, rest.data(), rest.size());
    if (n > 0) {
      rest.remove_prefix(static_cast<std::size_t>(n));
      continue;
    }
    if (n < 0 && errno == EINTR) continue;
    if (n < 0 && errno != EAGAIN) {
      const int error = errno;
      close();
      fail(IoErrorKind::disconnected, fmt::format("write failed: {}", std::strerror(error)));
    }
    pollfd waiting{fd_, POLLOUT, 0};
    const int ready = ::poll(&waiting, 1, milliseconds_left(deadline));
    if (ready == 0) {
      close();  // part of the message may be out; the line is no longer in step
      fail(IoErrorKind::timeout, fmt::format("write of \"{}\" timed out", escape_bytes(message)));
    }
    if (ready > 0 && (waiting.revents & (POLLERR | POLLHUP))) {
      close();
      fail(IoErrorKind::disconnected, "the serial line hung up during a write");
    }
  }
}

std::string SerialTransport::read_line(Deadline deadline) {
  if (!is_open()) fail(IoErrorKind::disconnected, "not open");
  for (;;) {
    if (auto line = framer_.next_line()) return std::move(*line);
    pollfd waiting{fd_, POLLIN, 0};
    const int ready = ::poll(&waiting, 1, milliseconds_left(deadline));
    if (ready < 0 && errno == EINTR) continue;
    if (ready == 0) {
      const auto pending = framer_.pending();
      fail(IoErrorKind::timeout,
           pending.empty() ? std::string("no reply before the deadline")
                           : fmt::format("reply incomplete at the deadline (got \"{}\" without a terminator)",
                                         escape_bytes(pending)));
    }
    const ssize_t n = ::read(fd_, chunk_.data(), chunk_.size());
    if (n > 0) {
      try {
        framer_.append(std::string_view(chunk_.data(), static_cast<std::size_t>(n)));
      } catch (const IoError& e) {
        close();
        fail(e.kind(), e.what());
      }
      continue;
    }
    if (n < 0 && (errno == EAGAIN || errno == EINTR)) continue;
    // read() of 0, EIO (a pseudo-terminal whose other side closed), or a vanished USB device.
    const std::string pending = escape_bytes(framer_.pending());
    const std::string reason = n == 0 ? std::string("end of file") : std::string(std::strerror(errno));
    close();
    fail(IoErrorKind::disconnected,
         pending.empty() ? fmt::format("serial line closed ({})", reason)
                         : fmt::format("serial line closed in the middle of a reply (got \"{}\"; {})", pending, reason));
  }
}

void SerialTransport::discard_input() {
  framer_.clear();
  if (!is_open()) return;
  ::tcflush(fd_, TCIFLUSH);
  for (;;) {  // tcflush may not reach bytes a pseudo-terminal already queued
    const ssize_t n = ::read(fd_, chunk_.data(), chunk_.size());
    if (n <= 0) break;
  }
}

}  // namespace zout
