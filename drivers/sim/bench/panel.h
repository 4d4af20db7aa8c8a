#pragma once
// The multi-unit test panel: numbered slots, each holding at most one unit (a serial number,
// maybe a fault), and the switch that connects one slot's output to the bench. Each unit has
// its own UnitSimulation running in simulated time; a unit not connected sits with its drive
// and load off (approximation: its input is held at 0 V through the generator's output
// resistance and the DMM's input resistance stays across its output) and is brought up to
// the present lazily when it is connected again.
//
// At power-on slot 1 is connected, so a bench whose daemon has no switch measures slot 1.

#include <map>
#include <memory>
#include <optional>
#include <string>

#include "drivers/sim/circuit/unit_simulation.h"
#include "fixture.h"
#include "sim_config.h"

namespace zout::sim {

struct UnitInfo {
  std::string serial;
  UnitFault fault = UnitFault::none;
};

class Panel : public Fixture {
 public:
  // Slots 1..config.slot_count(), filled from config.panel. Throws std::invalid_argument
  // when a unit's circuit cannot be simulated.
  explicit Panel(const SimConfig& config);

  void set_drive(const DriveSettings& drive, double now_s) override;
  void set_load(const LoadSettings& load, double now_s) override;
  OutputState output(double now_s) override;
  void close_slot(int slot, double now_s) override;
  void open_all(double now_s) override;
  std::optional<int> closed_slot() const override { return closed_; }
  int slot_count() const override { return slot_count_; }

  // Puts a unit into `slot` (replacing any unit there); it starts discharged and, if the
  // slot is connected, at once sees the present drive and load. std::invalid_argument for a
  // slot outside 1..slot_count() or a bad serial number.
  void insert_unit(int slot, const std::string& serial, UnitFault fault, double now_s);
  // Empties `slot` (std::invalid_argument outside 1..slot_count()).
  void remove_unit(int slot, double now_s);
  std::optional<UnitInfo> unit(int slot) const;

  // Ground truth of the connected unit (std::nullopt when the output is open): where the
  // output is heading under the present settings, the true settle time of the last
  // settings change to `tolerance_volts`, and the slowest time constant.
  std::optional<OutputState> steady_state(double now_s);
  std::optional<double> settle_time_s(double tolerance_volts, double now_s);
  // The slowest time constant of the connected unit's approach to that steady state.
  std::optional<double> time_constant_s(double now_s);

  const DriveSettings& drive() const { return drive_; }
  const LoadSettings& load() const { return load_; }

 private:
  struct Slot {
    UnitInfo info;
    std::unique_ptr<UnitSimulation> simulation;
    double inserted_at_s = 0.0;  // the unit's own time 0, in bench time
  };

  void check_slot(int slot) const;
  // The slot's simulation advanced to `now_s`; nullptr when the slot is empty.
  UnitSimulation* advanced(int slot, double now_s);
  UnitSimulation* connected(double now_s);

  const SimConfig& config_;
  int slot_count_;
  std::map<int, Slot> slots_;
  std::optional<int> closed_;
  DriveSettings drive_;
  LoadSettings load_;
};

}  // namespace zout::sim
