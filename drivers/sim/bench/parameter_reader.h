#pragma once
// Typed access to the parameters of one program message unit, with the SCPI rules for each
// type; every violation is an ScpiError with the standard code (SCPI-1999 Vol 2 §21.8).

#include <cstddef>
#include <initializer_list>
#include <string>
#include <string_view>
#include <vector>

#include "program_message.h"

namespace zout::sim {

// What a numeric parameter accepts: a value in [minimum, maximum] in SI units, the keywords
// MINimum, MAXimum and DEFault (SCPI-1999 Vol 1 §7.2.1), and a suffix made of a multiplier
// and `unit` (IEEE 488.2 §7.7.3: "mV", "kHz", "uA"; any case). An empty unit admits no suffix.
struct NumericSpec {
  std::string unit;  // "V", "A", "HZ", "OHM", or "" for a plain number
  double minimum = 0.0;
  double maximum = 0.0;
  double default_value = 0.0;
};

class ParameterReader {
 public:
  // `parameters` must outlive the reader.
  explicit ParameterReader(const std::vector<Parameter>& parameters) : parameters_(parameters) {}

  std::size_t size() const { return parameters_.size(); }
  bool has(std::size_t index) const { return index < parameters_.size(); }

  // -108 Parameter not allowed when there are more than `count` parameters.
  void allow_at_most(std::size_t count) const;
  // -109 Missing parameter when there are fewer than `count`.
  void require(std::size_t count) const;

  // A number in SI units; -104 (not numeric), -141 (unknown keyword), -131/-138 (suffix),
  // -222 (outside [minimum, maximum]).
  double number(std::size_t index, const NumericSpec& spec) const;
  // As number(), rounded to the nearest whole number (SCPI-1999 Vol 1 §7.2.1, as we
  // remember it: an integer setting takes a decimal value rounded).
  long long integer(std::size_t index, const NumericSpec& spec) const;
  // ON/OFF, or a number: rounded, non-zero means ON (SCPI-1999 Vol 1 §7.3).
  bool boolean(std::size_t index) const;
  // Character data matching one of `options` (written in SCPI case, "SINusoid": short or
  // long form, any case); returns the option as written. -141 for anything else.
  std::string choice(std::size_t index, std::initializer_list<std::string_view> options) const;
  // True when parameter `index` is character data matching `mnemonic` (SCPI case).
  bool is_keyword(std::size_t index, std::string_view mnemonic) const;
  // A quoted string's content; -104 for another type.
  std::string string(std::size_t index) const;
  // A channel list "(@1,3,5:7)" (SCPI-1999 Vol 1 §8.3.2); -104 for another type, -170 when
  // malformed. Ranges are expanded in order.
  std::vector<int> channel_list(std::size_t index) const;

  // Matches `typed` against a mnemonic written in SCPI case ("MAXimum"): short or long form.
  static bool mnemonic_matches(std::string_view typed, std::string_view mnemonic);
  // The multiplier a suffix stands for with the given unit; ScpiError -131/-138.
  static double suffix_multiplier(std::string_view suffix, std::string_view unit);

 private:
  const Parameter& at(std::size_t index) const;
  const std::vector<Parameter>& parameters_;
};

}  // namespace zout::sim
