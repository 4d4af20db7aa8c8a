#include "header_tree.h"

namespace zout::sim {

std::size_t HeaderTree::add(std::string_view pattern) {
  patterns_.emplace_back(pattern);
  return patterns_.size() - 1;
}

std::optional<std::size_t> HeaderTree::find(const std::vector<std::string>& nodes) const {
  for (std::size_t i = 0; i < patterns_.size(); ++i) {
    if (patterns_[i].matches(nodes)) return i;
  }
  return std::nullopt;
}

std::vector<std::string> HeaderTree::Level::expand(const std::vector<std::string>& typed,
                                                   bool absolute) const {
  if (absolute) return typed;
  std::vector<std::string> full = nodes_;
  full.insert(full.end(), typed.begin(), typed.end());
  return full;
}

void HeaderTree::Level::advance(const std::vector<std::string>& full) {
  nodes_.assign(full.begin(), full.empty() ? full.end() : full.end() - 1);
}

}  // namespace zout::sim
