#pragma once
// Where events go (DEVELOPERS.md, "Names and units": anything notable — fault, reconnect, safety trip): one line
// on stderr for the service manager's journal, a row in the store's event table, and an
// `event` notification to subscribers. Recording never throws.

#include <cstdint>
#include <functional>
#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "daemon/store/store_writer.h"

namespace zout {

// Sends one JSON-RPC notification (method, params) to every subscriber. Must not block.
using Notify = std::function<void(const std::string& method, const nlohmann::json& params)>;

class EventLog {
 public:
  // `store` must outlive the log and be used only from the calling thread.
  EventLog(store::StoreWriter& store, Notify notify, std::int64_t station_id)
      : store_(store), notify_(std::move(notify)), station_id_(station_id) {}

  void record(store::EventLevel level, const std::string& source, const std::string& code,
              const std::string& message, std::optional<std::int64_t> run_id = std::nullopt) noexcept;

 private:
  store::StoreWriter& store_;
  Notify notify_;
  std::int64_t station_id_;
};

}  // namespace zout
