#pragma once
// Splits a byte stream into response lines, the one framing rule every transport shares.
// A line ends at LF (or CR when the address says eol=cr); a CR just before the LF is
// dropped, so CRLF replies read the same as LF ones. Buffered bytes are bounded: a line
// longer than Framing::max_line_bytes is a protocol error, never unbounded memory.

#include <optional>
#include <string>
#include <string_view>

#include "address.h"

namespace zout {

class LineFramer {
 public:
  explicit LineFramer(Framing framing) : framing_(framing) {}

  // Adds received bytes. Throws IoError(protocol) when the unterminated line grows past
  // the limit (the buffer is cleared first, so the framer is usable afterwards).
  void append(std::string_view bytes);
  // The next complete line without its terminator, if one has arrived.
  std::optional<std::string> next_line();
  // Drops everything buffered.
  void clear() {
    buffer_.clear();
    scanned_ = 0;
    tail_bytes_ = 0;
  }
  bool empty() const { return buffer_.empty(); }
  // Bytes received that do not yet form a line (for error messages).
  std::string_view pending() const { return buffer_; }

  // The bytes to append to an outgoing message ("\n", "\r\n" or "\r").
  std::string_view terminator() const;

 private:
  char end_char() const { return framing_.line_ending == LineEnding::cr ? '\r' : '\n'; }

  Framing framing_;
  std::string buffer_;
  std::size_t scanned_ = 0;     // bytes of buffer_ known to hold no terminator
  std::size_t tail_bytes_ = 0;  // bytes after the last terminator received
};

}  // namespace zout
