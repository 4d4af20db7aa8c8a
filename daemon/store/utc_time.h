#pragma once
// Times as the store writes them: ISO-8601 UTC text with milliseconds,
// "2026-12-01T21:15:14.123Z" (DEVELOPERS.md, "Names and units"). Text of this form sorts in time order.

#include <chrono>
#include <string>

namespace zout::store {

using TimePoint = std::chrono::system_clock::time_point;

// Formats `time`, truncated (not rounded) to the millisecond. Years 0000-9999 only;
// others are a std::out_of_range.
std::string format_utc(TimePoint time);

// Reads text of exactly that form back (format_utc(parse_utc(t)) == t); anything else, an
// impossible date included, is a std::invalid_argument quoting the text.
TimePoint parse_utc(const std::string& text);

}  // namespace zout::store
