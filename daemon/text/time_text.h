#pragma once
// Times for people. An instant is shown to the second either in UTC with its Z
// ("2026-12-02T10:11:12Z", the default) or in the local time zone with its offset
// ("2026-12-02T11:11:12+01:00", when the user asks for local time) — never as a bare clock
// that could be read either way. Files and --json keep the store's ISO-8601 UTC text.

#include <chrono>
#include <optional>
#include <string>
#include <string_view>

namespace zout::text {

enum class TimeZoneChoice { utc, local };

// The instant of UTC text "YYYY-MM-DDTHH:MM:SS[.fraction]Z" (the store's form); empty when
// the text is not of that form or names no real date or time of day.
std::optional<std::chrono::system_clock::time_point> parse_utc_text(std::string_view text);

// `time` truncated to the second, in UTC with "Z" or local time (the process's TZ) with its
// "+hh:mm" offset.
std::string display_time(std::chrono::system_clock::time_point time, TimeZoneChoice zone);
// The same for the store's UTC text; the missing-value mark for empty text, and text that is
// not of the store's form unchanged.
std::string display_time(std::string_view stored_utc_text, TimeZoneChoice zone);

// A duration in seconds as m:ss under an hour, h:mm:ss above ("1:15", "1:02:05"); the
// missing-value mark when negative or not finite.
std::string clock_time(double seconds);

}  // namespace zout::text
