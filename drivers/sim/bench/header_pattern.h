#pragma once
// One SCPI command header as the standard writes it, e.g.
// "[SOURce:]VOLTage[:LEVel][:IMMediate][:AMPLitude]": mnemonics joined by ':', the upper-case
// part of each being its short form, nodes in [brackets] optional (SCPI-1999 Vol 1 §6.2).
// A node written "MEASure" matches "MEAS" or "MEASURE" in any case, and nothing else
// (SCPI-1999 Vol 1 §6.2.1: only the short or the long form is accepted).

#include <string>
#include <string_view>
#include <vector>

namespace zout::sim {

class HeaderPattern {
 public:
  struct Node {
    std::string long_form;   // upper case ("MEASURE")
    std::string short_form;  // upper case ("MEAS")
    bool optional = false;
  };

  // Parses a pattern; std::invalid_argument for a malformed one (a programming error).
  explicit HeaderPattern(std::string_view pattern);

  // True when the mnemonics `nodes` (upper case, as typed) spell this header, optional
  // nodes left out or not.
  bool matches(const std::vector<std::string>& nodes) const;

  const std::string& text() const { return text_; }
  const std::vector<Node>& nodes() const { return nodes_; }

 private:
  bool matches_from(const std::vector<std::string>& nodes, std::size_t pattern_index,
                    std::size_t node_index) const;

  std::string text_;
  std::vector<Node> nodes_;
};

}  // namespace zout::sim
