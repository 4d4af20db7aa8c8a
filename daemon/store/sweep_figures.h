#pragma once
// The figures of a sweep's analysis, listed once: the sweep_result column, the
// SweepResultRecord member and the SI unit a reader sees. The writer's INSERT, the readers'
// SELECT, the JSON for the api and notifications, and the report all walk this table, so a new
// figure is a migration (the column), the analysis that computes it and one line here.
// tests/unit/store_vocabulary_test.cpp checks the table against the schema's columns.

#include <array>
#include <optional>
#include <string>
#include <string_view>

#include <nlohmann/json_fwd.hpp>

#include "daemon/store/store_records.h"

namespace zout::store {

struct SweepFigure {
  std::string_view column;  // in sweep_result, and the key in JSON
  std::optional<double> SweepResultRecord::*member;
  std::string_view unit;    // "V", "Ω", "F", "A", "V/h", "Ω/h"; empty for a pure number
};

inline constexpr std::array<SweepFigure, 23> sweep_figures = {{
    {"v_oc_volts", &SweepResultRecord::v_oc_volts, "V"},
    {"z_out_ohms", &SweepResultRecord::z_out_ohms, "Ω"},
    {"z_out_stderr_ohms", &SweepResultRecord::z_out_stderr_ohms, "Ω"},
    {"z_chord_ohms", &SweepResultRecord::z_chord_ohms, "Ω"},
    {"cascade_r_ohms", &SweepResultRecord::cascade_r_ohms, "Ω"},
    {"cascade_r_stderr_ohms", &SweepResultRecord::cascade_r_stderr_ohms, "Ω"},
    {"effective_capacitance_farads", &SweepResultRecord::effective_capacitance_farads, "F"},
    {"diode_drop_volts", &SweepResultRecord::diode_drop_volts, "V"},
    {"diode_m", &SweepResultRecord::diode_m, ""},
    {"diode_i0_amps", &SweepResultRecord::diode_i0_amps, "A"},
    {"rated_load_amps", &SweepResultRecord::rated_load_amps, "A"},
    {"ripple_rated_rms_volts", &SweepResultRecord::ripple_rated_rms_volts, "V"},
    {"ripple_rated_pp_volts", &SweepResultRecord::ripple_rated_pp_volts, "V"},
    {"model_v_oc_volts", &SweepResultRecord::model_v_oc_volts, "V"},
    {"model_z_out_ohms", &SweepResultRecord::model_z_out_ohms, "Ω"},
    {"model_droop_rated_volts", &SweepResultRecord::model_droop_rated_volts, "V"},
    {"model_ripple_rated_pp_volts", &SweepResultRecord::model_ripple_rated_pp_volts, "V"},
    {"v_oc_drift_volts_per_hour", &SweepResultRecord::v_oc_drift_volts_per_hour, "V/h"},
    {"v_oc_drift_stderr_volts_per_hour", &SweepResultRecord::v_oc_drift_stderr_volts_per_hour, "V/h"},
    {"z_out_drift_ohms_per_hour", &SweepResultRecord::z_out_drift_ohms_per_hour, "Ω/h"},
    {"z_out_drift_stderr_ohms_per_hour", &SweepResultRecord::z_out_drift_stderr_ohms_per_hour, "Ω/h"},
    {"ripple_drift_volts_per_hour", &SweepResultRecord::ripple_drift_volts_per_hour, "V/h"},
    {"ripple_drift_stderr_volts_per_hour", &SweepResultRecord::ripple_drift_stderr_volts_per_hour, "V/h"},
}};

// The figure with this column name; nullptr for any other name.
const SweepFigure* sweep_figure_named(std::string_view column);

// "a.v_oc_volts, a.z_out_ohms, ..." for a SELECT over sweep_result aliased `alias`, in table order.
std::string sweep_figure_select_list(std::string_view alias);

// The record as JSON: "sweep" (number from 1), "computed_at" (ISO-8601 UTC), "fit_points",
// every figure by its column name (null when absent), "verdict" ("pass" | "fail" | null) and
// "verdict_reasons" (array of strings).
nlohmann::json sweep_result_json(const SweepResultRecord& record);

}  // namespace zout::store
