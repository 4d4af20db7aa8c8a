#pragma once
// Every point of a run with its raw readings, for other tools (`zout export`).
//   Table (for CSV): one row per reading, carrying the run, sweep, step and point it belongs to
//   and that point's figures. Reals are written in the shortest form that reads back to the
//   same double; an absent figure is an empty field. The CLI quotes the fields (RFC 4180).
//   JSON: {run (the run summary), plan (the plan document), points [each with readings],
//   sweep_results [every column], events}.

#include <nlohmann/json_fwd.hpp>

#include <string>
#include <vector>

#include "daemon/report/run_record.h"

namespace zout::report {

// The CSV columns, in order.
const std::vector<std::string>& export_csv_columns();

// One row of fields per reading, in point order then reading order; export_csv_columns() wide.
std::vector<std::vector<std::string>> export_reading_rows(const RunRecord& record);

nlohmann::json export_json(const RunRecord& record);

}  // namespace zout::report
