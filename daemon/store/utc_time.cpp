#include "utc_time.h"

#include <fmt/format.h>

#include <stdexcept>
#include <string_view>

#include "daemon/text/time_text.h"

namespace zout::store {

std::string format_utc(TimePoint time) {
  using namespace std::chrono;
  const auto ms = floor<milliseconds>(time);
  const auto day = floor<days>(ms);
  const year_month_day date{day};
  const hh_mm_ss clock{ms - day};
  const int year = static_cast<int>(date.year());
  if (year < 0 || year > 9999) throw std::out_of_range(fmt::format("year {} cannot be written as ISO-8601 text", year));
  return fmt::format("{:04}-{:02}-{:02}T{:02}:{:02}:{:02}.{:03}Z", year, static_cast<unsigned>(date.month()),
                     static_cast<unsigned>(date.day()), clock.hours().count(), clock.minutes().count(),
                     clock.seconds().count(), clock.subseconds().count());
}

TimePoint parse_utc(const std::string& text) {
  // Exactly the form format_utc writes (milliseconds, Z); the date arithmetic is daemon/text's.
  constexpr std::string_view shape = "dddd-dd-ddTdd:dd:dd.dddZ";
  bool matches = text.size() == shape.size();
  for (std::size_t i = 0; matches && i < shape.size(); ++i) {
    const bool digit = text[i] >= '0' && text[i] <= '9';
    matches = shape[i] == 'd' ? digit : text[i] == shape[i];
  }
  const auto time = matches ? text::parse_utc_text(text) : std::nullopt;
  if (!time) {
    throw std::invalid_argument(
        fmt::format("\"{}\" is not ISO-8601 UTC text of the form 2026-12-01T21:15:14.123Z", text));
  }
  return *time;
}

}  // namespace zout::store
