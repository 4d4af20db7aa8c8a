#pragma once
// The JSON-RPC methods of zoutd (DEVELOPERS.md, "Control protocol") over the engine and a read-only view of the
// store: bench.describe, run.start, run.abort, run.get, run.list, events.subscribe.
// Malformed params are -32602 naming the parameter; a plan that fails to load or exceeds
// the bench's safety maxima is -32001 with the file, JSON path and rule.

#include <memory>
#include <string>

#include <nlohmann/json.hpp>

#include "daemon/api/control_server.h"
#include "daemon/engine/engine.h"
#include "daemon/store/run_reader.h"

namespace zout {

class ControlMethods {
 public:
  // `engine` must be started (its database exists) and outlive this.
  explicit ControlMethods(Engine& engine);

  // Dispatches one request; throws rpc::RpcError.
  nlohmann::json call(const rpc::Request& request, ControlServer::CallContext& context);

 private:
  nlohmann::json run_start(const nlohmann::json& params);
  nlohmann::json run_abort(const nlohmann::json& params);
  nlohmann::json run_get(const nlohmann::json& params);
  nlohmann::json run_list(const nlohmann::json& params);
  nlohmann::json run_row(std::int64_t run_id);

  Engine& engine_;
  store::RunReader reader_;
};

}  // namespace zout
