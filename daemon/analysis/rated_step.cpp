#include "rated_step.h"

#include <cmath>

namespace zout::analysis {

bool is_rated_load(double amps, double rated_amps) {
  return rated_amps > 0.0 && std::abs(amps - rated_amps) <= rated_step_tolerance * rated_amps;
}

std::optional<std::size_t> rated_step_index(const std::vector<double>& step_amps, double rated_amps) {
  if (step_amps.empty() || !(rated_amps > 0.0)) return std::nullopt;
  std::size_t nearest = 0;
  for (std::size_t i = 1; i < step_amps.size(); ++i) {
    if (std::abs(step_amps[i] - rated_amps) < std::abs(step_amps[nearest] - rated_amps)) nearest = i;
  }
  if (!is_rated_load(step_amps[nearest], rated_amps)) return std::nullopt;
  return nearest;
}

}  // namespace zout::analysis
