#pragma once
// A Transport over a serial line. Real ports (including USB adapters found by serial number)
// open through libserialport; a pseudo-terminal, which Debian's libserialport 0.1.1 refuses
// (it looks the name up in sysfs, and its open fails with "Inappropriate ioctl for device"),
// opens through plain POSIX termios. Both paths then share one descriptor-level reader:
// poll() with the deadline, the same LineFramer, the same IoError kinds. Every port is
// locked with flock() while open, so a second zout process gets a clear "busy" error.

#include <array>
#include <string>

#include "address.h"
#include "io_error.h"
#include "line_framer.h"
#include "transport.h"

struct sp_port;

namespace zout {

class SerialTransport : public Transport {
 public:
  // `address` must hold a SerialEndpoint.
  explicit SerialTransport(Address address);
  ~SerialTransport() override;

  void open(Deadline deadline) override;
  void close() noexcept override;
  bool is_open() const override { return fd_ >= 0; }
  void write_message(std::string_view message, Deadline deadline) override;
  std::string read_line(Deadline deadline) override;
  void discard_input() override;
  const std::string& address() const override { return address_.text; }

  // The device actually opened (resolved from a USB serial number when the address has one).
  const std::string& device_path() const { return device_path_; }

 private:
  void open_with_libserialport();
  void open_pseudo_terminal();
  void lock_port();
  [[noreturn]] void fail(IoErrorKind kind, const std::string& what);

  Address address_;
  SerialEndpoint endpoint_;
  std::string device_path_;
  sp_port* port_ = nullptr;  // set when opened through libserialport
  int fd_ = -1;              // the descriptor both paths read and write
  LineFramer framer_;
  std::array<char, 4096> chunk_{};
};

// True when `device_path` (after following symlinks) is a pseudo-terminal slave.
bool is_pseudo_terminal(const std::string& device_path);

}  // namespace zout
