#pragma once
// One point of a cascade's I–V curve as the fits see it.

#include <span>
#include <string_view>

namespace zout::analysis {

struct IvPoint {
  double current_amps = 0.0;  // load current, >= 0
  double volts = 0.0;         // mean DC output
  // Standard uncertainty of volts (e.g. the standard error of the mean of the DC readings);
  // 0 = unknown. When every point used by a fit has one, the fit weights by 1/σ².
  double volts_sigma = 0.0;
};

// Throws std::invalid_argument naming the point ("<what>[2].volts is not finite (nan)") when
// a current is negative or non-finite, volts is non-finite, or volts_sigma is negative.
void require_valid_points(std::span<const IvPoint> points, std::string_view what);

// True when every point carries volts_sigma > 0.
bool all_have_sigma(std::span<const IvPoint> points);

}  // namespace zout::analysis
