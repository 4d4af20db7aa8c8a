#include "daemon/cli/time_zone_option.h"

namespace zout::cli {

void add_time_zone_option(CLI::App& verb, text::TimeZoneChoice& zone) {
  verb.add_flag_callback(
      "--local-time", [&zone] { zone = text::TimeZoneChoice::local; },
      "Show times in local time with the UTC offset (2026-12-02T11:11:12+01:00) instead of UTC "
      "(2026-12-02T10:11:12Z)");
}

}  // namespace zout::cli
