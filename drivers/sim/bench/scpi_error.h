#pragma once
// An SCPI error raised while a simulated instrument parses or executes a command. The
// instrument catches it and puts it in its error queue (SCPI-1999 Vol 2 §21.8); it never
// leaves the instrument.

#include <stdexcept>
#include <string>

namespace zout::sim {

// Standard codes used by the simulated instruments. Meanings per SCPI-1999 Vol 2 §21.8
// (error/event numbers; the descriptions below are from memory).
namespace scpi_code {
inline constexpr int command_error = -100;          // generic command error
inline constexpr int invalid_character = -101;      // a character not allowed in that element
inline constexpr int syntax_error = -102;           // unrecognised command or data form
inline constexpr int data_type_error = -104;        // a data element of another type was expected
inline constexpr int parameter_not_allowed = -108;  // more parameters than the header takes
inline constexpr int missing_parameter = -109;      // fewer parameters than the header needs
inline constexpr int undefined_header = -113;       // header not defined for this instrument
inline constexpr int invalid_suffix = -131;         // a unit suffix that does not fit
inline constexpr int suffix_not_allowed = -138;     // a suffix where none is allowed
inline constexpr int invalid_character_data = -141; // a mnemonic not valid for this header
inline constexpr int expression_error = -170;       // a malformed expression (channel list)
inline constexpr int settings_conflict = -221;      // valid value, but not in the present state
inline constexpr int data_out_of_range = -222;      // a value outside the legal range
inline constexpr int illegal_parameter_value = -224;  // value not in a list of allowed values
inline constexpr int queue_overflow = -350;         // error queue full; later errors lost
inline constexpr int input_buffer_overrun = -363;   // a program message longer than the buffer
}  // namespace scpi_code

// The standard description of `code` ("Undefined header"), or "Error" for a code we do not
// know.
const char* scpi_error_description(int code);

class ScpiError : public std::runtime_error {
 public:
  // `detail` is the device-dependent part appended after ';' in the queue entry (may be empty).
  ScpiError(int code, const std::string& detail) : std::runtime_error(detail), code_(code) {}
  int code() const { return code_; }

 private:
  int code_;
};

}  // namespace zout::sim
