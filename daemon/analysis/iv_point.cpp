#include "iv_point.h"

#include <string>

#include "daemon/analysis/input_checks.h"

namespace zout::analysis {

void require_valid_points(std::span<const IvPoint> points, std::string_view what) {
  for (std::size_t i = 0; i < points.size(); ++i) {
    const std::string name = std::string(what) + "[" + std::to_string(i) + "]";
    require_non_negative(points[i].current_amps, name + ".current_amps");
    require_finite(points[i].volts, name + ".volts");
    require_non_negative(points[i].volts_sigma, name + ".volts_sigma");
  }
}

bool all_have_sigma(std::span<const IvPoint> points) {
  for (const IvPoint& p : points) {
    if (!(p.volts_sigma > 0.0)) return false;
  }
  return !points.empty();
}

}  // namespace zout::analysis
