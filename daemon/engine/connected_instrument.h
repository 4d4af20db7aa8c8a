#pragma once
// One instrument as the bench found it when connecting: its role, where it is, what it says
// it is, and what was left in its error queue.

#include <string>
#include <vector>

#include "drivers/scpi/error_entry.h"
#include "drivers/scpi/identity.h"

namespace zout {

struct ConnectedInstrument {
  std::string role;     // source | meter | load | switch
  std::string address;
  Identity identity;
  std::vector<ErrorEntry> stale_errors;  // entries found in its error queue when connecting
};

}  // namespace zout
