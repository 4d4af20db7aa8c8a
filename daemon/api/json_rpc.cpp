#include "json_rpc.h"

#include "daemon/plan/bounded_json.h"

namespace zout::rpc {

std::variant<nlohmann::json, nlohmann::json> parse_message(const std::string& line) {
  try {
    return std::variant<nlohmann::json, nlohmann::json>(std::in_place_index<0>, parse_bounded_json(line));
  } catch (const JsonRefused& e) {
    return std::variant<nlohmann::json, nlohmann::json>(std::in_place_index<1>,
                                                        make_error(nullptr, parse_error, std::string("parse error: ") + e.what()));
  }
}

std::variant<Request, nlohmann::json> parse_request(const nlohmann::json& document) {
  if (!document.is_object()) return make_error(nullptr, invalid_request, "invalid request: not a JSON object");
  const auto id_member = document.find("id");
  const nlohmann::json id = id_member != document.end() ? *id_member : nlohmann::json();
  if (!id.is_null() && !id.is_string() && !id.is_number_integer()) {
    return make_error(nullptr, invalid_request, "invalid request: id must be a string, an integer or null");
  }
  const auto version = document.find("jsonrpc");
  if (version == document.end() || !version->is_string() || version->get<std::string>() != "2.0") {
    return make_error(id, invalid_request, "invalid request: \"jsonrpc\" must be the string \"2.0\"");
  }
  const auto method = document.find("method");
  if (method == document.end() || !method->is_string()) {
    return make_error(id, invalid_request, "invalid request: \"method\" must be a string");
  }
  for (const auto& [key, unused] : document.items()) {
    if (key != "jsonrpc" && key != "method" && key != "params" && key != "id") {
      return make_error(id, invalid_request, "invalid request: unknown member \"" + escaped_bytes(key) + "\"");
    }
  }
  Request request;
  request.id = id;
  request.is_notification = id_member == document.end();
  request.method = method->get<std::string>();
  const auto params = document.find("params");
  request.params = params != document.end() ? *params : nlohmann::json::object();
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
