#pragma once
// Settling detection after a load step: the engine feeds DC readings one at a time and the
// detector says whether to keep reading, that the output has settled, or that it gave up
// (max_s passed first). Every detector takes readings as (time since the load step in
// seconds, volts) with time strictly increasing; a non-finite reading, a time that does not
// increase, or a reading after the final decision throws std::invalid_argument /
// std::logic_error. A detector is for one load step; make a new one for the next.

#include <cstddef>
#include <memory>
#include <optional>
#include <string>

namespace zout::analysis {

enum class SettleStatus { keep_going, settled, gave_up };

// Text for logs and the store: "keep_going", "settled", "gave_up".
const char* to_string(SettleStatus status);

struct SettleDecision {
  SettleStatus status = SettleStatus::keep_going;
  // The value to use: meaningful once settled or gave_up (each detector says what it is);
  // the latest reading while keep_going.
  double volts = 0.0;
};

class SettlingDetector {
 public:
  virtual ~SettlingDetector() = default;

  // Feed one reading. Settling is checked first; if the rule does not hold and time_s >=
  // max_s the detector gives up, returning its best value so far.
  SettleDecision add_reading(double time_s, double volts);

  double max_s() const { return max_s_; }
  bool finished() const { return finished_; }

 protected:
  // max_s: finite and > 0 (std::invalid_argument otherwise).
  explicit SettlingDetector(double max_s);

  // The detector's rule for this reading: the value to use when settled, else nothing.
  virtual std::optional<double> settled_value(double time_s, double volts) = 0;
  // The value to report when giving up; default: the latest reading.
  virtual double give_up_value(double latest_volts) const { return latest_volts; }

 private:
  double max_s_;
  double last_time_s_ = 0.0;
  bool have_reading_ = false;
  bool finished_ = false;
};

// The plan's settle block (plan: settle.method, tolerance_volts, max_s) and each method's own
// knobs, with the defaults a plan gets when it leaves them out.
struct SettleSettings {
  enum class Method { fixed, window, predictive };
  Method method = Method::window;
  double tolerance_volts = 0.01;
  double max_s = 30.0;
  double dwell_s = 2.0;             // fixed: settled at the first reading at or after dwell_s
  std::size_t window_readings = 5;  // window: k readings within tolerance
  std::size_t fit_readings = 100;   // predictive: readings the fit uses (the latest ones)
  std::size_t min_fit_readings = 5; // predictive: readings needed before it decides
};

// The detector for the settings (throws std::invalid_argument for invalid settings).
std::unique_ptr<SettlingDetector> make_settling_detector(const SettleSettings& settings);

}  // namespace zout::analysis
