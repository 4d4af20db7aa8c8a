#pragma once
// One entry of an instrument's error queue, as returned by SYSTem:ERRor[:NEXT]?
// (SCPI-1999 Vol 2 §21.8): <code>,"<description>[;<device-dependent info>]".
// Code 0 means the queue is empty ("No error").

#include <string>
#include <string_view>

namespace zout {

struct ErrorEntry {
  int code = 0;
  std::string message;  // the quoted description, unquoted

  bool is_no_error() const { return code == 0; }
};

// Parses one SYSTem:ERRor? reply; a reply of another form is an IoError(protocol).
ErrorEntry parse_error_entry(std::string_view reply);

}  // namespace zout
