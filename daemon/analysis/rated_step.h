#pragma once
// The rated load's step, one rule for the plan, the analysis, the engine and the report: the
// load step nearest the rated current counts as the rated step when it lies within 5 % of it
// (a plan's steps are set values, so a step at the rated load matches exactly; the window only
// admits a step that was rounded to the load's resolution).

#include <cstddef>
#include <optional>
#include <vector>

namespace zout::analysis {

inline constexpr double rated_step_tolerance = 0.05;  // relative to the rated current

// Whether a load current of `amps` counts as the rated load `rated_amps` (> 0).
bool is_rated_load(double amps, double rated_amps);

// The index of the step nearest `rated_amps` (the first of equals), when it counts as the
// rated load; nullopt when none does, or when `rated_amps` is not positive.
std::optional<std::size_t> rated_step_index(const std::vector<double>& step_amps, double rated_amps);

}  // namespace zout::analysis
