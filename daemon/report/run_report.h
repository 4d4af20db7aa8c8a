#pragma once
// The report of one run, as plain text for a terminal and as JSON (`zout report --json`):
// header (run, unit, slot, plan, station, operator, state, times, duration), the latest
// sweep's figures with their standard errors, the Cockcroft–Walton comparison, the points
// table, for a soak run the drift slopes, the verdict with each reason, and the run's warning
// and error events. Numbers in the text carry 4 significant digits with SI prefixes and units
// ("189.7 kΩ ± 11.8 kΩ"), times are shown in UTC with Z or in local time with the offset, and
// an absent figure is the missing-value mark (daemon/text). The JSON carries numbers exactly
// as stored and times as the store's UTC text (null where the store has NULL).

#include <nlohmann/json_fwd.hpp>

#include <optional>
#include <string>

#include "daemon/report/run_record.h"
#include "daemon/text/time_text.h"

namespace zout::report {

// Seconds from started_at to ended_at; empty when either is missing or unreadable.
std::optional<double> run_duration_s(const store::RunSummary& header);

// The text report, its times shown in `zone`; every line ends in '\n'.
std::string render_text_report(const RunRecord& record, text::TimeZoneChoice zone);

// The same content as a JSON object: run, figures, model_comparison, points, drift (null for
// a production run), verdict {verdict, reasons}, events (warning and error only).
nlohmann::json render_json_report(const RunRecord& record);

}  // namespace zout::report
