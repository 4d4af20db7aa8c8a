#pragma once
// The panel switch role: connects one slot of a multi-unit test panel to the bench
// (SCPI-1999 ROUTe subsystem). Slots are numbered from 1.

namespace zout {

class Switch {
 public:
  virtual ~Switch() = default;

  // Connects `slot` (and only it: implementations open the others first when the
  // instrument does not).
  virtual void close_slot(int slot) = 0;
  // Disconnects every slot.
  virtual void open_all() = 0;
  // Whether `slot` is connected now.
  virtual bool is_closed(int slot) = 0;
};

}  // namespace zout
