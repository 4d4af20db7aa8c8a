#include "panel.h"

#include <algorithm>
#include <stdexcept>

#include <fmt/format.h>

#include "unit_builder.h"

namespace zout::sim {

Panel::Panel(const SimConfig& config) : config_(config), slot_count_(config.slot_count()) {
  for (const auto& entry : config.panel) insert_unit(entry.slot, entry.serial, entry.fault, 0.0);
  close_slot(1, 0.0);
}

void Panel::check_slot(int slot) const {
  if (slot < 1 || slot > slot_count_) {
    throw std::invalid_argument(fmt::format("no slot {} on this panel (slots 1 to {})", slot, slot_count_));
  }
}

UnitSimulation* Panel::advanced(int slot, double now_s) {
  const auto it = slots_.find(slot);
  if (it == slots_.end()) return nullptr;
  UnitSimulation& simulation = *it->second.simulation;
  const double unit_time_s = std::max(now_s - it->second.inserted_at_s, simulation.time_s());
  simulation.advance_to(unit_time_s);
  return &simulation;
}

UnitSimulation* Panel::connected(double now_s) {
  if (!closed_) return nullptr;
  return advanced(*closed_, now_s);
}

void Panel::set_drive(const DriveSettings& drive, double now_s) {
  drive_ = drive;
  if (auto* simulation = connected(now_s)) simulation->set_drive(drive_);
}

void Panel::set_load(const LoadSettings& load, double now_s) {
  load_ = load;
  if (auto* simulation = connected(now_s)) simulation->set_load(load_);
}

OutputState Panel::output(double now_s) {
  if (auto* simulation = connected(now_s)) return simulation->output();
  return {};
}

void Panel::open_all(double now_s) {
  if (auto* simulation = connected(now_s)) {
    simulation->set_drive(DriveSettings{drive_.frequency_hz, 0.0, 0.0, false});
    simulation->set_load(LoadSettings{});
  }
  closed_.reset();
}

void Panel::close_slot(int slot, double now_s) {
  check_slot(slot);
  if (closed_ == slot) return;
  open_all(now_s);
  closed_ = slot;
  if (auto* simulation = connected(now_s)) {
    simulation->set_drive(drive_);
    simulation->set_load(load_);
  }
}

void Panel::insert_unit(int slot, const std::string& serial, UnitFault fault, double now_s) {
  check_slot(slot);
  if (const auto problem = serial_number_problem(serial); !problem.empty()) {
    throw std::invalid_argument(fmt::format("serial \"{}\": {}", serial, problem));
  }
  Slot entry;
  entry.info = {serial, fault};
  entry.simulation = std::make_unique<UnitSimulation>(build_unit_circuit(config_, serial, fault));
  entry.inserted_at_s = now_s;
  if (closed_ == slot) {
    entry.simulation->set_drive(drive_);
    entry.simulation->set_load(load_);
  }
  slots_[slot] = std::move(entry);
}

void Panel::remove_unit(int slot, double) {
  check_slot(slot);
  slots_.erase(slot);
}

std::optional<UnitInfo> Panel::unit(int slot) const {
  const auto it = slots_.find(slot);
  if (it == slots_.end()) return std::nullopt;
  return it->second.info;
}

std::optional<OutputState> Panel::steady_state(double now_s) {
  if (auto* simulation = connected(now_s)) return simulation->steady_state();
  return std::nullopt;
}

std::optional<double> Panel::settle_time_s(double tolerance_volts, double now_s) {
  if (auto* simulation = connected(now_s)) return simulation->settle_time_s(tolerance_volts);
  return std::nullopt;
}

std::optional<double> Panel::time_constant_s(double now_s) {
  if (auto* simulation = connected(now_s)) return simulation->slowest_time_constant_s();
  return std::nullopt;
}

}  // namespace zout::sim
