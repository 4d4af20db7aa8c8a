#pragma once
// A panel switch driven through a dialect of role "switch" (see config/dialects/).

#include "drivers/instruments/dialect.h"
#include "drivers/instruments/operation_runner.h"
#include "drivers/instruments/switch.h"
#include "drivers/scpi/session.h"

namespace zout {

class ScpiSwitch : public Switch {
 public:
  // Throws DialectError unless `dialect` has role "switch". `session` must outlive this.
  ScpiSwitch(Session& session, Dialect dialect);

  // Opens every slot, then closes `slot`; std::invalid_argument for a slot below 1.
  void close_slot(int slot) override;
  void open_all() override;
  bool is_closed(int slot) override;

 private:
  OperationRunner runner_;
};

}  // namespace zout
