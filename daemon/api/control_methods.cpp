#include "control_methods.h"

#include <fmt/format.h>

#include "daemon/plan/bounded_json.h"
#include "daemon/plan/config_error.h"
#include "daemon/plan/json_reader.h"
#include "daemon/plan/plan.h"
#include "daemon/store/record_json.h"
#include "daemon/store/store_error.h"

namespace zout {
namespace {

// Runs `read` over the params with JsonReader's path-naming checks; its refusals become
// invalid-params errors.
template <typename Read>
auto with_params(const std::string& method, const nlohmann::json& params, Read read) {
  if (!params.is_object()) throw rpc::RpcError(rpc::invalid_params, method + ": params must be an object");
  try {
    JsonReader reader(params, "params", method);
    return read(reader);
  } catch (const ConfigError& e) {
    throw rpc::RpcError(rpc::invalid_params, e.what());
  }
}

// A method that takes no params refuses any it is given (an empty object or array is none).
void refuse_params(const std::string& method, const nlohmann::json& params) {
  if ((params.is_object() || params.is_array()) && params.empty()) return;
  if (params.is_object()) {
    throw rpc::RpcError(rpc::invalid_params,
                        fmt::format("{}: takes no params; got \"{}\"", method, escaped_bytes(params.begin().key())));
  }
  throw rpc::RpcError(rpc::invalid_params, method + ": takes no params");
}

}  // namespace

ControlMethods::ControlMethods(Engine& engine)
    : engine_(engine), reader_(engine.bench().database_path) {}

nlohmann::json ControlMethods::call(const rpc::Request& request, ControlServer::CallContext& context) {
  const auto& m = request.method;
  if (m == "bench.describe") {
    refuse_params(m, request.params);
    return engine_.describe_bench();
  }
  if (m == "run.start") return run_start(request.params);
  if (m == "run.abort") return run_abort(request.params);
  if (m == "run.get") return run_get(request.params);
  if (m == "run.list") return run_list(request.params);
  if (m == "events.subscribe") {
    refuse_params(m, request.params);
    context.subscribe();
    return {{"subscribed", true}};
  }
  throw rpc::RpcError(rpc::method_not_found,
                      fmt::format("method not found: \"{}\"; methods: bench.describe, run.start, run.abort, run.get, "
                                  "run.list, events.subscribe",
                                  escaped_bytes(m)));
}

nlohmann::json ControlMethods::run_start(const nlohmann::json& params) {
  struct Start {
    std::optional<Plan> plan;
    std::string origin;
    std::vector<UnitRequest> units;
    std::string operator_name;
    std::string note;
  };
  // Shape first (invalid params), then the plan itself (refused, with the plan's own paths).
  Start start = with_params("run.start", params, [](JsonReader& p) {
    Start s;
    auto path = p.optional_member("plan_path");
    auto inline_plan = p.optional_member("plan");
    if (path.has_value() == inline_plan.has_value()) p.fail("give exactly one of plan_path and plan");
    if (path) s.origin = path->string();
    if (inline_plan && !inline_plan->json().is_object()) inline_plan->fail("must be an object (a plan)");
    for (JsonReader unit : p.member("units").elements(1, 1000)) {
      UnitRequest request;
      request.serial = unit.member("serial").name();
      if (auto slot = unit.optional_member("slot")) request.slot = static_cast<int>(slot->integer(1, 10'000));
      unit.refuse_unknown_keys();
      s.units.push_back(request);
    }
    if (auto op = p.optional_member("operator")) s.operator_name = op->string(true);
    if (auto note = p.optional_member("note")) s.note = note->string(true);
    p.refuse_unknown_keys();
    return s;
  });
  try {
    if (start.origin.empty()) {
      start.origin = "inline plan";
      start.plan = parse_plan(params.at("plan"), start.origin);
    } else {
      start.plan = load_plan_file(start.origin);
    }
    const auto ids = engine_.enqueue(*start.plan, start.origin, start.units, start.operator_name, start.note);
    return {{"run_ids", ids}};
  } catch (const ConfigError& e) {
    throw rpc::RpcError(rpc::refused, e.what());
  } catch (const store::StoreError& e) {
    throw rpc::RpcError(rpc::refused, e.what());
  }
}

nlohmann::json ControlMethods::run_abort(const nlohmann::json& params) {
  const auto run_id = with_params("run.abort", params, [](JsonReader& p) {
    const auto id = p.member("run_id").integer(1, INT64_MAX);
    p.refuse_unknown_keys();
    return id;
  });
  if (!engine_.abort(run_id)) {
    throw rpc::RpcError(rpc::not_found, fmt::format("run {} is neither queued nor running", run_id));
  }
  return {{"run_id", run_id}, {"aborting", true}};
}

nlohmann::json ControlMethods::run_row(std::int64_t run_id) {
  const auto run = reader_.run(run_id);
  if (!run) throw rpc::RpcError(rpc::not_found, fmt::format("no run {}", run_id));
  return store::run_summary_json(*run);
}

nlohmann::json ControlMethods::run_get(const nlohmann::json& params) {
  const auto run_id = with_params("run.get", params, [](JsonReader& p) {
    const auto id = p.member("run_id").integer(1, INT64_MAX);
    p.refuse_unknown_keys();
    return id;
  });
  nlohmann::json run = run_row(run_id);
  run["points"] = reader_.point_count(run_id);
  const auto progress = engine_.progress();
  run["progress"] = progress && progress->run_id == run_id ? progress->to_json() : nlohmann::json();
  return run;
}

nlohmann::json ControlMethods::run_list(const nlohmann::json& params) {
  const store::RunFilter filter = with_params("run.list", params, [](JsonReader& p) {
    store::RunFilter f;
    if (auto state = p.optional_member("state")) {
      f.state = store::run_state_named(state->choice(store::run_state_word_list()));
    }
    if (auto serial = p.optional_member("serial")) f.serial = serial->string();
    if (auto limit = p.optional_member("limit")) f.limit = static_cast<int>(limit->integer(1, 10'000));
    p.refuse_unknown_keys();
    return f;
  });
  nlohmann::json runs = nlohmann::json::array();
  for (const auto& run : reader_.runs(filter)) runs.push_back(store::run_summary_json(run));
  return {{"runs", runs}};
}

}  // namespace zout
