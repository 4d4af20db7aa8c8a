#pragma once
// JSON-RPC 2.0 framing (the JSON-RPC 2.0 specification, jsonrpc.org): one request object
// per line in, one response object per line out, notifications (no id) from the server.
// Error codes are the specification's: -32700 parse error, -32600 invalid request,
// -32601 method not found, -32602 invalid params, -32603 internal error; zout's own
// application errors use the range the specification reserves for servers (-32000..-32099).

#include <optional>
#include <stdexcept>
#include <string>
#include <variant>

#include <nlohmann/json.hpp>

namespace zout::rpc {

enum ErrorCode : int {
  parse_error = -32700,
  invalid_request = -32600,
  method_not_found = -32601,
  invalid_params = -32602,
  internal_error = -32603,
  refused = -32001,    // a valid request the daemon will not carry out (unsafe plan, bad file)
  not_found = -32002,  // no such run
};

// Thrown by a method handler; becomes an error response with this code and message.
class RpcError : public std::runtime_error {
 public:
  RpcError(int code, const std::string& message, nlohmann::json data = nullptr)
      : std::runtime_error(message), code_(code), data_(std::move(data)) {}
  int code() const { return code_; }
  const nlohmann::json& data() const { return data_; }

 private:
  int code_;
  nlohmann::json data_;
};

struct Request {
  nlohmann::json id;  // null for a notification from the client (no reply is sent)
  bool is_notification = false;
  std::string method;
  nlohmann::json params;  // object or array; an empty object when absent
};

// Parses one line into its JSON (index 0), bounded as daemon/plan/bounded_json.h says; a line
// that is not JSON, nests too deep or overflows a number gives the -32700 response to send
// instead (index 1). Never throws for any input.
std::variant<nlohmann::json, nlohmann::json> parse_message(const std::string& line);

// Checks one request object (one line's JSON, or one element of a batch, JSON-RPC 2.0 §4
// and §6). A malformed one gives the -32600 response to send instead. Never throws.
std::variant<Request, nlohmann::json> parse_request(const nlohmann::json& document);

nlohmann::json make_result(const nlohmann::json& id, nlohmann::json result);
nlohmann::json make_error(const nlohmann::json& id, int code, const std::string& message,
                          const nlohmann::json& data = nullptr);
nlohmann::json make_notification(const std::string& method, nlohmann::json params);

}  // namespace zout::rpc
