#include "json_rpc.h"

namespace zout::rpc {

std::variant<Request, nlohmann::json> parse_request(const std::string& line) {
  nlohmann::json document;
  try {
    document = nlohmann::json::parse(line);
  } catch (const nlohmann::json::parse_error& e) {
    return make_error(nullptr, parse_error, std::string("parse error: ") + e.what());
  }
  if (!document.is_object()) return make_error(nullptr, invalid_request, "invalid request: not a JSON object");
  nlohmann::json id = document.contains("id") ? document["id"] : nlohmann::json();
  if (!id.is_null() && !id.is_string() && !id.is_number_integer()) {
    return make_error(nullptr, invalid_request, "invalid request: id must be a string, an integer or null");
  }
  if (document.value("jsonrpc", "") != "2.0") {
    return make_error(id, invalid_request, "invalid request: \"jsonrpc\" must be \"2.0\"");
  }
  if (!document.contains("method") || !document["method"].is_string()) {
    return make_error(id, invalid_request, "invalid request: \"method\" must be a string");
  }
  for (const auto& [key, unused] : document.items()) {
    if (key != "jsonrpc" && key != "method" && key != "params" && key != "id") {
      return make_error(id, invalid_request, "invalid request: unknown member \"" + key + "\"");
    }
  }
  Request request;
  request.id = id;
  request.is_notification = !document.contains("id");
  request.method = document["method"].get<std::string>();
  request.params = document.contains("params") ? document["params"] : nlohmann::json::object();
  if (!request.params.is_object() && !request.params.is_array()) {
    return make_error(id, invalid_request, "invalid request: \"params\" must be an object or an array");
  }
  return request;
}

nlohmann::json make_result(const nlohmann::json& id, nlohmann::json result) {
  return {{"jsonrpc", "2.0"}, {"id", id}, {"result", std::move(result)}};
}

nlohmann::json make_error(const nlohmann::json& id, int code, const std::string& message, const nlohmann::json& data) {
  nlohmann::json error = {{"code", code}, {"message", message}};
  if (!data.is_null()) error["data"] = data;
  return {{"jsonrpc", "2.0"}, {"id", id}, {"error", error}};
}

nlohmann::json make_notification(const std::string& method, nlohmann::json params) {
  return {{"jsonrpc", "2.0"}, {"method", method}, {"params", std::move(params)}};
}

}  // namespace zout::rpc
