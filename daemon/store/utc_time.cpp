#include "utc_time.h"

#include <fmt/format.h>

#include <stdexcept>
#include <string_view>

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
  using namespace std::chrono;
  const auto refuse = [&text]() { return std::invalid_argument(fmt::format("\"{}\" is not ISO-8601 UTC text "
                                                                         "of the form 2026-12-01T21:15:14.123Z", text)); };
  // Positions of the digits in "YYYY-MM-DDTHH:MM:SS.mmmZ".
  constexpr std::string_view shape = "dddd-dd-ddTdd:dd:dd.dddZ";
  if (text.size() != shape.size()) throw refuse();
  for (std::size_t i = 0; i < shape.size(); ++i) {
    const bool digit = text[i] >= '0' && text[i] <= '9';
    if (shape[i] == 'd' ? !digit : text[i] != shape[i]) throw refuse();
  }
  const auto number = [&text](std::size_t at, std::size_t length) {
    int value = 0;
    for (std::size_t i = at; i < at + length; ++i) value = value * 10 + (text[i] - '0');
    return value;
  };
  const year_month_day date{year{number(0, 4)}, month{static_cast<unsigned>(number(5, 2))},
                            day{static_cast<unsigned>(number(8, 2))}};
  const int hours_of_day = number(11, 2);
  const int minutes_of_hour = number(14, 2);
  const int seconds_of_minute = number(17, 2);
  if (!date.ok() || hours_of_day > 23 || minutes_of_hour > 59 || seconds_of_minute > 59) throw refuse();
  return sys_days{date} + hours{hours_of_day} + minutes{minutes_of_hour} + seconds{seconds_of_minute} +
         milliseconds{number(20, 3)};
}

}  // namespace zout::store
