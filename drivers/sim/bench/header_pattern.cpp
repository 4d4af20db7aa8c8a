#include "header_pattern.h"

#include <cctype>
#include <stdexcept>

namespace zout::sim {

namespace {

[[noreturn]] void malformed(std::string_view pattern, const char* why) {
  throw std::invalid_argument("header pattern \"" + std::string(pattern) + "\": " + why);
}

}  // namespace

HeaderPattern::HeaderPattern(std::string_view pattern) : text_(pattern) {
  // Grammar: node := mnemonic | '[' [':'] mnemonic [':'] ']' ; nodes separated by ':'.
  // Both "[SOURce:]VOLTage" and "VOLTage[:LEVel]" place the colon inside the brackets.
  std::size_t i = 0;
  while (i < pattern.size()) {
    bool optional = false;
    if (pattern[i] == ':') {
      ++i;
      continue;
    }
    if (pattern[i] == '[') {
      optional = true;
      ++i;
      if (i < pattern.size() && pattern[i] == ':') ++i;
    }
    Node node;
    node.optional = optional;
    while (i < pattern.size() && (std::isalnum(static_cast<unsigned char>(pattern[i])) || pattern[i] == '_')) {
      const char c = pattern[i];
      const char up = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
      node.long_form += up;
      if (c == up) node.short_form += up;  // upper case (and digits) form the short form
      ++i;
    }
    if (node.long_form.empty()) malformed(pattern, "empty mnemonic");
    if (node.short_form.empty()) malformed(pattern, "mnemonic without an upper-case short form");
    if (optional) {
      if (i < pattern.size() && pattern[i] == ':') ++i;
      if (i >= pattern.size() || pattern[i] != ']') malformed(pattern, "'[' not closed");
      ++i;
    }
    nodes_.push_back(std::move(node));
  }
  if (nodes_.empty()) malformed(pattern, "no mnemonics");
}

bool HeaderPattern::matches(const std::vector<std::string>& nodes) const {
  return matches_from(nodes, 0, 0);
}

bool HeaderPattern::matches_from(const std::vector<std::string>& nodes, std::size_t pattern_index,
                                 std::size_t node_index) const {
  if (pattern_index == nodes_.size()) return node_index == nodes.size();
  const Node& node = nodes_[pattern_index];
  if (node_index < nodes.size()) {
    const std::string& typed = nodes[node_index];
    if ((typed == node.long_form || typed == node.short_form) &&
        matches_from(nodes, pattern_index + 1, node_index + 1)) {
      return true;
    }
  }
  return node.optional && matches_from(nodes, pattern_index + 1, node_index);
}

}  // namespace zout::sim
