#include "event_log.h"

#include <fmt/format.h>

#include <iostream>

#include "daemon/store/utc_time.h"

namespace zout {

void EventLog::record(store::EventLevel level, const std::string& source, const std::string& code,
                      const std::string& message, std::optional<std::int64_t> run_id) noexcept {
  try {
    const auto at = std::chrono::system_clock::now();
    const std::string level_text(store::to_string(level));
    std::cerr << fmt::format("{} {} {} {}: {}{}\n", store::format_utc(at), level_text, source, code, message,
                             run_id ? fmt::format(" (run {})", *run_id) : std::string());
    try {
      store_.record_event({at, level, source, code, message, run_id, station_id_});
    } catch (const std::exception& e) {
      std::cerr << "zoutd: could not record the event above: " << e.what() << "\n";
    }
    nlohmann::json params = {{"at", store::format_utc(at)}, {"level", level_text}, {"source", source},
                             {"code", code},                {"message", message}};
    if (run_id) params["run_id"] = *run_id;
    if (notify_) notify_("event", params);
  } catch (...) {
    // An event that cannot even be printed must not take the engine down.
  }
}

}  // namespace zout
