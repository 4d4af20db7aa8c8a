#pragma once
// A reading that takes time: the instrument samples the simulated circuit at given moments
// while it integrates, then forms its reply. The link that runs the command calls sample()
// at each moment (on timers, so other instruments keep working meanwhile) and finish() after
// the last one.

#include <cstddef>
#include <string>
#include <vector>

namespace zout::sim {

class Acquisition {
 public:
  virtual ~Acquisition() = default;

  // Seconds after the start of the reading at which to sample, ascending, at least one.
  virtual const std::vector<double>& sample_offsets_s() const = 0;
  // Takes sample `index` at simulated time `now_s`.
  virtual void sample(std::size_t index, double now_s) = 0;
  // The response message unit, after all samples.
  virtual std::string finish() = 0;
};

}  // namespace zout::sim
