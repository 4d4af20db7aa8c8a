#pragma once
// Argument checks shared by the analysis functions. Each throws std::invalid_argument with a
// message that starts with the name of the function or argument at fault.

#include <cstddef>
#include <span>
#include <string>
#include <string_view>

namespace zout::analysis {

// Throws unless value is finite: "<what> is not finite (nan)".
void require_finite(double value, std::string_view what);
// Throws unless value is finite and > 0.
void require_positive(double value, std::string_view what);
// Throws unless value is finite and >= 0.
void require_non_negative(double value, std::string_view what);
// Throws unless every element is finite: "<what>[3] is not finite (inf)".
void require_all_finite(std::span<const double> values, std::string_view what);
// Throws unless a and b have the same length.
void require_same_size(std::size_t a, std::size_t b, std::string_view what_a,
                       std::string_view what_b);

// A number for messages: up to 6 significant digits, no trailing zeros ("412000", "2.5e-07").
std::string format_number(double value);

}  // namespace zout::analysis
