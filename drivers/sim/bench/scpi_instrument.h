#pragma once
// The part every simulated SCPI instrument shares: the IEEE 488.2 common commands and status
// registers, the error queue and SYSTem:ERRor?, and dispatch of compound headers through one
// HeaderTree to the instrument's own handlers. A subclass registers its command tree in its
// constructor and implements reset().

#include <cstdint>
#include <functional>
#include <string>
#include <string_view>
#include <vector>

#include "command_outcome.h"
#include "error_queue.h"
#include "header_tree.h"
#include "instrument_faults.h"
#include "parameter_reader.h"

namespace zout::sim {

// The four *IDN? fields (IEEE 488.2 §10.14); none may contain a comma.
struct InstrumentIdentity {
  std::string manufacturer;
  std::string model;
  std::string serial_number;
  std::string firmware;
};

class ScpiInstrument {
 public:
  // Time spent parsing and acting on each program message unit: a few milliseconds, as a
  // bench instrument takes (common practice).
  static constexpr double command_time_s = 0.002;

  ScpiInstrument(std::string role, InstrumentIdentity identity);
  virtual ~ScpiInstrument() = default;
  ScpiInstrument(const ScpiInstrument&) = delete;
  ScpiInstrument& operator=(const ScpiInstrument&) = delete;

  // Parses and executes one program message unit at simulated time `now_s`, at `level` of
  // the message (updated). Never throws for anything a client sends: errors go to the queue.
  CommandOutcome execute(std::string_view unit_text, HeaderTree::Level& level, double now_s);

  // Queues an error and sets the matching event status bit (IEEE 488.2 §11.5.1).
  void push_error(int code, const std::string& detail = {});
  // *RST: the instrument's settings to their reset state (not the queue or the status).
  virtual void reset(double now_s) = 0;

  const std::string& role() const { return role_; }
  const InstrumentIdentity& identity() const { return identity_; }
  const ErrorQueue& errors() const { return errors_; }
  InstrumentFaults& faults() { return faults_; }
  const HeaderTree& tree() const { return tree_; }

 protected:
  using Handler = std::function<CommandOutcome(const ParameterReader& parameters, double now_s)>;

  // Registers a header. `set` runs the command form, `query` the '?' form; either may be
  // empty (that form is then an undefined header). More parameters than the given maxima
  // are refused with -108 before the handler runs.
  void add_command(std::string_view pattern, Handler set, std::size_t set_max_parameters, Handler query,
                   std::size_t query_max_parameters);

  // The reply to the query form of a numeric setting: `current`, or with a MINimum,
  // MAXimum or DEFault parameter that limit of `spec` (common practice: "FREQ? MAX").
  static CommandOutcome numeric_answer(const ParameterReader& parameters, const NumericSpec& spec, double current);

 private:
  struct Command {
    Handler set;
    std::size_t set_max_parameters = 0;
    Handler query;
    std::size_t query_max_parameters = 0;
  };

  CommandOutcome run_common(const ProgramUnit& unit);
  std::uint8_t status_byte() const;

  std::string role_;
  InstrumentIdentity identity_;
  HeaderTree tree_;
  std::vector<Command> commands_;
  ErrorQueue errors_;
  InstrumentFaults faults_;
  // IEEE 488.2 §11.5.1 standard event status register; power-on sets PON (bit 7).
  std::uint8_t event_status_ = 0x80;
  std::uint8_t event_status_enable_ = 0;
  std::uint8_t service_request_enable_ = 0;
};

}  // namespace zout::sim
