#pragma once
// Lexing of one SCPI program message (one line from the client) into program message
// units (IEEE 488.2 §7.1-§7.7, SCPI-1999 Vol 1 §6): a header (common "*IDN?" or compound
// "[:]NODE:NODE[?]") and its parameters (decimal numbers with an optional unit suffix,
// non-decimal #H/#Q/#B numbers, character data such as ON or MAX, quoted strings, and
// expressions such as the channel list "(@1,3)"). Only the form is checked here; whether a
// header exists and what its parameters mean is the instrument's business.

#include <string>
#include <string_view>
#include <vector>

namespace zout::sim {

struct Parameter {
  enum class Kind { number, mnemonic, string, expression };
  Kind kind = Kind::mnemonic;
  std::string text;      // mnemonic: as written; string: unquoted; expression: inside the parentheses
  double number = 0.0;   // kind number: the value without its suffix
  std::string suffix;    // kind number: the unit suffix as written ("mV", "kHz"); may be empty
};

struct ProgramUnit {
  std::string header;              // as written, '?' included
  bool query = false;              // the header ends with '?'
  bool common = false;             // an IEEE 488.2 common command ("*RST")
  bool absolute = false;           // a compound header starting with ':' (from the root)
  std::vector<std::string> nodes;  // compound headers: the mnemonics, upper case; common: "*RST"
  std::vector<Parameter> parameters;
};

class ProgramMessageParser {
 public:
  // Splits a program message at ';' outside quoted strings and parentheses. Units that are
  // empty or only white space are dropped. Never throws.
  static std::vector<std::string> split_units(std::string_view message);

  // Parses one program message unit. Throws ScpiError: -101 for a control or non-ASCII
  // character, -102 for a malformed header or parameter.
  static ProgramUnit parse_unit(std::string_view unit);
};

}  // namespace zout::sim
