#include "daemon/text/time_text.h"

#include <cmath>
#include <cstdio>
#include <ctime>

#include "daemon/text/missing_value.h"

namespace zout::text {
namespace {

// The unsigned decimal number in text[from, from + count), digits only.
std::optional<int> digits_at(std::string_view text, std::size_t from, std::size_t count) {
  if (from + count > text.size()) return std::nullopt;
  int value = 0;
  for (std::size_t i = from; i < from + count; ++i) {
    if (text[i] < '0' || text[i] > '9') return std::nullopt;
    value = value * 10 + (text[i] - '0');
  }
  return value;
}

}  // namespace

std::optional<std::chrono::system_clock::time_point> parse_utc_text(std::string_view text) {
  using namespace std::chrono;
  // YYYY-MM-DDTHH:MM:SS then an optional .fraction, then Z.
  if (text.size() < 20 || text[4] != '-' || text[7] != '-' || text[10] != 'T' || text[13] != ':' ||
      text[16] != ':') {
    return std::nullopt;
  }
  const auto y = digits_at(text, 0, 4), mo = digits_at(text, 5, 2), d = digits_at(text, 8, 2);
  const auto h = digits_at(text, 11, 2), mi = digits_at(text, 14, 2), s = digits_at(text, 17, 2);
  if (!y || !mo || !d || !h || !mi || !s || *h > 23 || *mi > 59 || *s > 59) return std::nullopt;
  std::size_t at = 19;
  nanoseconds fraction{0};
  if (text[at] == '.') {
    ++at;
    long long scale = 100'000'000;
    const std::size_t first = at;
    while (at < text.size() && text[at] >= '0' && text[at] <= '9') {
      fraction += nanoseconds((text[at] - '0') * scale);
      scale /= 10;
      ++at;
    }
    if (at == first) return std::nullopt;
  }
  if (at + 1 != text.size() || text[at] != 'Z') return std::nullopt;
  const year_month_day day{year{*y}, month{static_cast<unsigned>(*mo)}, std::chrono::day{static_cast<unsigned>(*d)}};
  if (!day.ok()) return std::nullopt;
  const auto instant = sys_days{day} + hours{*h} + minutes{*mi} + seconds{*s} + fraction;
  return time_point_cast<system_clock::duration>(instant);
}

std::string display_time(std::chrono::system_clock::time_point time, TimeZoneChoice zone) {
  using namespace std::chrono;
  const auto whole = floor<seconds>(time);
  char buffer[64];
  if (zone == TimeZoneChoice::local) {
    ::tzset();  // read TZ as it is now
    const std::time_t since_epoch = static_cast<std::time_t>(whole.time_since_epoch().count());
    std::tm local{};
    if (::localtime_r(&since_epoch, &local) != nullptr) {
      const long offset_minutes = local.tm_gmtoff / 60;
      const long magnitude = offset_minutes < 0 ? -offset_minutes : offset_minutes;
      std::snprintf(buffer, sizeof buffer, "%04d-%02d-%02dT%02d:%02d:%02d%c%02ld:%02ld", local.tm_year + 1900,
                    local.tm_mon + 1, local.tm_mday, local.tm_hour, local.tm_min, local.tm_sec,
                    offset_minutes < 0 ? '-' : '+', magnitude / 60, magnitude % 60);
      return buffer;
    }
    // No local time for this instant: UTC, which at least says what it is.
  }
  const auto day = floor<days>(whole);
  const year_month_day date{day};
  const hh_mm_ss clock{whole - day};
  std::snprintf(buffer, sizeof buffer, "%04d-%02u-%02uT%02d:%02d:%02dZ", static_cast<int>(date.year()),
                static_cast<unsigned>(date.month()), static_cast<unsigned>(date.day()),
                static_cast<int>(clock.hours().count()), static_cast<int>(clock.minutes().count()),
                static_cast<int>(clock.seconds().count()));
  return buffer;
}

std::string display_time(std::string_view stored_utc_text, TimeZoneChoice zone) {
  if (stored_utc_text.empty()) return missing_value_mark;
  const auto time = parse_utc_text(stored_utc_text);
  return time ? display_time(*time, zone) : std::string(stored_utc_text);
}

std::string clock_time(double seconds) {
  if (!std::isfinite(seconds) || seconds < 0.0) return missing_value_mark;
  const long total = std::lround(seconds);
  char buffer[64];
  if (total < 3600) {
    std::snprintf(buffer, sizeof buffer, "%ld:%02ld", total / 60, total % 60);
  } else {
    std::snprintf(buffer, sizeof buffer, "%ld:%02ld:%02ld", total / 3600, (total / 60) % 60, total % 60);
  }
  return buffer;
}

}  // namespace zout::text
