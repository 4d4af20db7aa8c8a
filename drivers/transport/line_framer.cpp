#include "line_framer.h"

#include <fmt/format.h>

#include "io_error.h"

namespace zout {

void LineFramer::append(std::string_view bytes) {
  buffer_.append(bytes);
  // Only the tail after the last terminator counts against the limit.
  const auto last = bytes.rfind(end_char());
  tail_bytes_ = last == std::string_view::npos ? tail_bytes_ + bytes.size() : bytes.size() - last - 1;
  if (tail_bytes_ > framing_.max_line_bytes) {
    const std::size_t tail = tail_bytes_;
    const std::string head = buffer_.substr(buffer_.size() - tail, 32);
    clear();
    throw IoError(IoErrorKind::protocol,
                  fmt::format("reply line longer than {} bytes ({} bytes without a terminator, starting \"{}\")",
                              framing_.max_line_bytes, tail, escape_bytes(head)));
  }
}

std::optional<std::string> LineFramer::next_line() {
  const auto end = buffer_.find(end_char(), scanned_);
  if (end == std::string::npos) {
    scanned_ = buffer_.size();
    return std::nullopt;
  }
  std::string line = buffer_.substr(0, end);
  buffer_.erase(0, end + 1);
  scanned_ = 0;
  if (end_char() == '\n' && !line.empty() && line.back() == '\r') line.pop_back();
  return line;
}

std::string_view LineFramer::terminator() const {
  switch (framing_.line_ending) {
    case LineEnding::lf: return "\n";
    case LineEnding::crlf: return "\r\n";
    case LineEnding::cr: return "\r";
  }
  return "\n";
}

}  // namespace zout
