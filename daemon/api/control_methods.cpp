#include "control_methods.h"

#include <sqlite3.h>

#include <fmt/format.h>

#include "daemon/plan/config_error.h"
#include "daemon/plan/json_reader.h"
#include "daemon/plan/plan.h"
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

// The current row of `s` as a JSON object keyed by column name, values typed as stored.
nlohmann::json row_object(store::Statement& s) {
  sqlite3_stmt* h = s.handle();
  nlohmann::json row = nlohmann::json::object();
  for (int i = 0; i < sqlite3_column_count(h); ++i) {
    const std::string name = sqlite3_column_name(h, i);
    switch (sqlite3_column_type(h, i)) {
      case SQLITE_NULL: row[name] = nullptr; break;
      case SQLITE_INTEGER: row[name] = s.column_int(i); break;
      case SQLITE_FLOAT: row[name] = s.column_real(i); break;
      default: row[name] = s.column_text(i); break;
    }
  }
  // The verdict reasons are stored as a JSON array in text; hand them over as an array.
  if (row.contains("verdict_reasons_json") && row["verdict_reasons_json"].is_string()) {
    row["verdict_reasons"] = nlohmann::json::parse(row["verdict_reasons_json"].get<std::string>(), nullptr, false);
    row.erase("verdict_reasons_json");
  }
  return row;
}

}  // namespace

ControlMethods::ControlMethods(Engine& engine)
    : engine_(engine), reader_(engine.bench().database_path, store::Database::Access::read_only) {}

nlohmann::json ControlMethods::call(const rpc::Request& request, ControlServer::CallContext& context) {
  const auto& m = request.method;
  if (m == "bench.describe") return engine_.describe_bench();
  if (m == "run.start") return run_start(request.params);
  if (m == "run.abort") return run_abort(request.params);
  if (m == "run.get") return run_get(request.params);
  if (m == "run.list") return run_list(request.params);
  if (m == "events.subscribe") {
    context.subscribe();
    return {{"subscribed", true}};
  }
  throw rpc::RpcError(rpc::method_not_found,
                      fmt::format("method not found: \"{}\"; methods: bench.describe, run.start, run.abort, run.get, "
                                  "run.list, events.subscribe",
                                  m));
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
      request.serial = unit.member("serial").string();
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
  auto use = reader_.cached("SELECT * FROM run_summary WHERE run_id = :run");
  use->bind_int(":run", run_id);
  if (!use->step()) throw rpc::RpcError(rpc::not_found, fmt::format("no run {}", run_id));
  return row_object(*use);
}

nlohmann::json ControlMethods::run_get(const nlohmann::json& params) {
  const auto run_id = with_params("run.get", params, [](JsonReader& p) {
    const auto id = p.member("run_id").integer(1, INT64_MAX);
    p.refuse_unknown_keys();
    return id;
  });
  nlohmann::json run = run_row(run_id);
  {
    auto use = reader_.cached(
        "SELECT count(*) FROM point pt JOIN sweep w ON w.sweep_id = pt.sweep_id WHERE w.run_id = :run");
    use->bind_int(":run", run_id);
    use->step();
    run["points"] = use->column_int(0);
  }
  const auto progress = engine_.progress();
  run["progress"] = progress && progress->run_id == run_id ? progress->to_json() : nlohmann::json();
  return run;
}

nlohmann::json ControlMethods::run_list(const nlohmann::json& params) {
  struct Filter {
    std::string state;
    std::string serial;
    long long limit = 50;
  };
  const Filter filter = with_params("run.list", params, [](JsonReader& p) {
    Filter f;
    if (auto state = p.optional_member("state")) {
      f.state = state->choice({"queued", "running", "passed", "failed", "aborted", "interrupted", "error"});
    }
    if (auto serial = p.optional_member("serial")) f.serial = serial->string();
    if (auto limit = p.optional_member("limit")) f.limit = limit->integer(1, 10'000);
    p.refuse_unknown_keys();
    return f;
  });
  auto use = reader_.cached(
      "SELECT * FROM run_summary WHERE (:state = '' OR state = :state) AND (:serial = '' OR serial = :serial) "
      "ORDER BY run_id DESC LIMIT :limit");
  use->bind_text(":state", filter.state).bind_text(":serial", filter.serial).bind_int(":limit", filter.limit);
  nlohmann::json runs = nlohmann::json::array();
  while (use->step()) runs.push_back(row_object(*use));
  return {{"runs", runs}};
}

}  // namespace zout
