#pragma once
// The one option, spelled the same on every verb that shows times (runs, status, start,
// watch, report): --local-time shows them in local time with the offset instead of UTC with
// Z. JSON output keeps the store's UTC text either way.

#include <CLI/CLI.hpp>

#include "daemon/text/time_text.h"

namespace zout::cli {

// Adds --local-time to `verb`; given, it sets `zone` to local (left as it is otherwise, UTC
// by default). `zone` must outlive the parse.
void add_time_zone_option(CLI::App& verb, text::TimeZoneChoice& zone);

}  // namespace zout::cli
