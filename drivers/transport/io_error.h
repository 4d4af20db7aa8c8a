#pragma once
// The typed failure every transport and the SCPI session report. Callers branch on kind():
// a timeout or a dropped link is worth a reconnect; a protocol error means the bytes made no sense.

#include <stdexcept>
#include <string>

namespace zout {

enum class IoErrorKind {
  open_failed,   // the address could not be opened or connected (missing, busy, refused)
  timeout,       // the deadline passed before the operation completed
  disconnected,  // the peer closed the link or the device vanished
  protocol,      // bytes arrived that break the framing or the expected response form
};

// Text name of a kind, for messages and logs ("timeout", "disconnected", ...).
const char* to_string(IoErrorKind kind);

class IoError : public std::runtime_error {
 public:
  IoError(IoErrorKind kind, const std::string& message);
  IoErrorKind kind() const { return kind_; }

 private:
  IoErrorKind kind_;
};

// Printable form of raw bytes for error messages: printable ASCII kept, \r \n \t and
// everything else escaped (\xNN), cut after max_bytes with a note of how many were left out.
std::string escape_bytes(std::string_view bytes, std::size_t max_bytes = 64);

}  // namespace zout
