#include "utc_time.h"

#include <fmt/format.h>

#include <stdexcept>

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

}  // namespace zout::store
