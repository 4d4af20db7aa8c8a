#pragma once
// The command headers one instrument knows, and the lookup of a typed header in them with
// the tree-level rule for ';'-joined commands (IEEE 488.2 Annex A, SCPI-1999 Vol 1 §6.2;
// clause numbers from memory): within one program message, a compound header without a
// leading ':' continues at the level of the previous compound header (its nodes minus the
// last); a leading ':' starts again from the root; common commands (*XXX) leave the level
// as it is. Each new program message starts at the root.

#include <cstddef>
#include <optional>
#include <string_view>
#include <vector>

#include "header_pattern.h"

namespace zout::sim {

class HeaderTree {
 public:
  // Adds a header pattern (see HeaderPattern); returns its index, in the order added.
  std::size_t add(std::string_view pattern);

  // The index of the first pattern that `nodes` (upper case mnemonics) match, if any.
  std::optional<std::size_t> find(const std::vector<std::string>& nodes) const;

  // The level reached within one program message.
  class Level {
   public:
    // The nodes a compound header at this level stands for (level + typed, or typed alone
    // when `absolute`).
    std::vector<std::string> expand(const std::vector<std::string>& typed, bool absolute) const;
    // After a compound header whose full nodes were `full`: the level moves to full minus
    // its last node.
    void advance(const std::vector<std::string>& full);
    const std::vector<std::string>& nodes() const { return nodes_; }

   private:
    std::vector<std::string> nodes_;
  };

  const std::vector<HeaderPattern>& patterns() const { return patterns_; }

 private:
  std::vector<HeaderPattern> patterns_;
};

}  // namespace zout::sim
