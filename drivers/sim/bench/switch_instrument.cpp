#include "switch_instrument.h"

#include <algorithm>

#include <fmt/format.h>

#include "response_format.h"
#include "scpi_error.h"

namespace zout::sim {

SwitchInstrument::SwitchInstrument(Fixture& fixture)
    : ScpiInstrument("switch", {"zout-sim", "SIM-MUX-1", "ZS-MUX-0001", "sim-0.1.0"}), fixture_(fixture) {
  const auto states = [this](bool closed) {
    return [this, closed](const ParameterReader& p, double) {
      std::string reply;
      for (int channel : channels(p)) {
        if (!reply.empty()) reply += ',';
        reply += format_boolean((fixture_.closed_slot() == channel) == closed);
      }
      return CommandOutcome::answer(reply);
    };
  };
  add_command(
      "ROUTe:CLOSe",
      [this](const ParameterReader& p, double now_s) {
        const auto list = channels(p);
        if (list.size() != 1) {
          throw ScpiError(scpi_code::settings_conflict,
                          fmt::format("{} channels; this multiplexer closes one slot at a time", list.size()));
        }
        fixture_.close_slot(list.front(), now_s);
        CommandOutcome outcome;
        outcome.busy_s = relay_settle_s;
        return outcome;
      },
      1, states(true), 1);
  add_command("ROUTe:CLOSe:STATe", {}, 0,
              [this](const ParameterReader&, double) {
                const auto closed = fixture_.closed_slot();
                return CommandOutcome::answer(closed ? fmt::format("(@{})", *closed) : std::string("(@)"));
              },
              0);
  add_command(
      "ROUTe:OPEN",
      [this](const ParameterReader& p, double now_s) {
        const auto list = channels(p);
        const auto closed = fixture_.closed_slot();
        if (closed && std::find(list.begin(), list.end(), *closed) != list.end()) fixture_.open_all(now_s);
        return CommandOutcome::none();
      },
      1, states(false), 1);
  add_command(
      "ROUTe:OPEN:ALL",
      [this](const ParameterReader&, double now_s) {
        fixture_.open_all(now_s);
        return CommandOutcome::none();
      },
      0, {}, 0);
}

std::vector<int> SwitchInstrument::channels(const ParameterReader& parameters) const {
  parameters.require(1);
  auto list = parameters.channel_list(0);
  for (int channel : list) {
    if (channel < 1 || channel > fixture_.slot_count()) {
      throw ScpiError(scpi_code::data_out_of_range,
                      fmt::format("channel {}; this panel has slots 1 to {}", channel, fixture_.slot_count()));
    }
  }
  return list;
}

void SwitchInstrument::reset(double now_s) { fixture_.open_all(now_s); }

}  // namespace zout::sim
