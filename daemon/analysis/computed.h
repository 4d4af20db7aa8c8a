#pragma once
// Two small value types every analysis result uses.
//
// Error policy of the whole library (see README.md):
//   * input the caller must never pass (mismatched lengths, NaN or infinite values, a negative
//     frequency, zero stages, ...) throws std::invalid_argument whose message names the
//     offending argument;
//   * valid data that does not support a figure (too few points, a singular fit, no
//     convergence) is not an error: the figure comes back as a Computed<T> without a value
//     and with the reason in words.

#include <optional>
#include <stdexcept>
#include <string>
#include <utility>

namespace zout::analysis {

// A value and its standard error (one standard deviation, same unit as the value).
// standard_error is empty when the data cannot say (e.g. a fit with no degrees of freedom).
struct Estimate {
  double value = 0.0;
  std::optional<double> standard_error;
};

// A figure that was computed, or the reason it could not be.
template <typename T>
class Computed {
 public:
  static Computed of(T value) {
    Computed c;
    c.value_ = std::move(value);
    return c;
  }
  static Computed missing(std::string reason) {
    Computed c;
    c.reason_ = std::move(reason);
    return c;
  }

  bool has_value() const { return value_.has_value(); }
  explicit operator bool() const { return has_value(); }
  // The value; throws std::logic_error carrying the reason when there is none.
  const T& value() const {
    if (!value_) throw std::logic_error("figure not computed: " + reason_);
    return *value_;
  }
  const T* operator->() const { return &value(); }
  // Why there is no value; empty when there is one.
  const std::string& reason() const { return reason_; }

 private:
  Computed() = default;
  std::optional<T> value_;
  std::string reason_;
};

}  // namespace zout::analysis
