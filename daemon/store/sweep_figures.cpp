#include "sweep_figures.h"

#include <nlohmann/json.hpp>

namespace zout::store {

const SweepFigure* sweep_figure_named(std::string_view column) {
  for (const auto& figure : sweep_figures) {
    if (figure.column == column) return &figure;
  }
  return nullptr;
}

std::string sweep_figure_select_list(std::string_view alias) {
  std::string list;
  for (const auto& figure : sweep_figures) {
    if (!list.empty()) list += ", ";
    list.append(alias).append(".").append(figure.column);
  }
  return list;
}

nlohmann::json sweep_result_json(const SweepResultRecord& record) {
  nlohmann::json out = {{"sweep", record.sweep},
                        {"computed_at", format_utc(record.computed_at)},
                        {"fit_points", record.fit_points}};
  for (const auto& figure : sweep_figures) {
    const auto& value = record.*figure.member;
    out[std::string(figure.column)] = value ? nlohmann::json(*value) : nlohmann::json();
  }
  out["verdict"] = record.verdict ? nlohmann::json(std::string(to_string(*record.verdict))) : nlohmann::json();
  out["verdict_reasons"] = record.verdict_reasons;
  return out;
}

}  // namespace zout::store
