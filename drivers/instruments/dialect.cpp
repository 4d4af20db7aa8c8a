#include "dialect.h"

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <fstream>
#include <stdexcept>
#include <system_error>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "dialect_error.h"

namespace zout {

namespace {

using nlohmann::json;

// What a role requires of one operation.
struct OperationRule {
  std::string name;
  std::vector<std::string> placeholders;  // the values the operation may use
  bool needs_placeholder = false;         // must use at least one of them
  std::optional<ResponseType> answer;     // set for operations that return a value
};

struct RoleRule {
  std::string role;
  std::vector<OperationRule> operations;
};

const std::vector<RoleRule>& role_rules() {
  static const std::vector<RoleRule> rules = {
      {"source",
       {
           {"select_sine", {}, false, std::nullopt},
           {"set_frequency", {"frequency_hz"}, true, std::nullopt},
           {"set_amplitude",
            {"amplitude_volts_peak", "amplitude_volts_pp", "amplitude_volts_rms"},
            true,
            std::nullopt},
           {"set_offset", {"offset_volts"}, true, std::nullopt},
           {"output_on", {}, false, std::nullopt},
           {"output_off", {}, false, std::nullopt},
           {"read_frequency", {}, false, ResponseType::number},
           {"read_amplitude", {}, false, ResponseType::number},
           {"read_offset", {}, false, ResponseType::number},
           {"read_output", {}, false, ResponseType::boolean},
       }},
      {"meter",
       {
           {"configure_dc_volts", {"range_volts", "nplc"}, false, std::nullopt},
           {"configure_ac_volts", {"range_volts"}, false, std::nullopt},
           {"read_one", {}, false, ResponseType::number},
           {"read_many", {"count"}, true, ResponseType::number_list},
       }},
      {"load",
       {
           {"select_current_mode", {}, false, std::nullopt},
           {"select_resistance_mode", {}, false, std::nullopt},
           {"set_current", {"current_amps"}, true, std::nullopt},
           {"set_resistance", {"resistance_ohms"}, true, std::nullopt},
           {"input_on", {}, false, std::nullopt},
           {"input_off", {}, false, std::nullopt},
           {"measure_current", {}, false, ResponseType::number},
           {"measure_voltage", {}, false, ResponseType::number},
       }},
      {"switch",
       {
           {"close_slot", {"slot"}, true, std::nullopt},
           {"open_all", {}, false, std::nullopt},
           {"read_closed", {"slot"}, true, ResponseType::boolean},
       }},
  };
  return rules;
}

const RoleRule* find_role(const std::string& role) {
  for (const auto& rule : role_rules()) {
    if (rule.role == role) return &rule;
  }
  return nullptr;
}

const OperationRule* find_operation(const RoleRule& role, const std::string& name) {
  for (const auto& rule : role.operations) {
    if (rule.name == name) return &rule;
  }
  return nullptr;
}

std::optional<ResponseType> response_type_named(const std::string& name) {
  for (auto type : {ResponseType::number, ResponseType::number_list, ResponseType::boolean,
                    ResponseType::integer, ResponseType::string}) {
    if (name == to_string(type)) return type;
  }
  return std::nullopt;
}

std::string operation_names(const RoleRule& role) {
  std::string out;
  for (const auto& rule : role.operations) {
    if (!out.empty()) out += ", ";
    out += rule.name;
  }
  return out;
}

// "{a}, {b}" or "none" for an operation that takes no values.
std::string placeholder_list(const std::vector<std::string>& names) {
  if (names.empty()) return "none";
  std::string out;
  for (const auto& name : names) {
    if (!out.empty()) out += ", ";
    out += "{" + name + "}";
  }
  return out;
}

// One piece of a command template: literal text or a placeholder name.
struct Piece {
  bool is_placeholder = false;
  std::string text;
};

// Splits a template into pieces. Returns a description of what is wrong with it, or an
// empty string when it is well formed. Braces always mark placeholders; there is no escape.
std::string split_template(std::string_view text, std::vector<Piece>& pieces) {
  pieces.clear();
  std::string literal;
  for (std::size_t i = 0; i < text.size(); ++i) {
    const char c = text[i];
    if (c == '}') return fmt::format("unbalanced brace: '}}' at character {} has no '{{'", i + 1);
    if (c != '{') {
      literal += c;
      continue;
    }
    const std::size_t close = text.find_first_of("{}", i + 1);
    if (close == std::string_view::npos || text[close] == '{') {
      return fmt::format("unbalanced brace: '{{' at character {} is not closed", i + 1);
    }
    if (close == i + 1) return fmt::format("empty placeholder {{}} at character {}", i + 1);
    if (!literal.empty()) pieces.push_back({false, std::move(literal)});
    literal.clear();
    pieces.push_back({true, std::string(text.substr(i + 1, close - i - 1))});
    i = close;
  }
  if (!literal.empty()) pieces.push_back({false, std::move(literal)});
  return {};
}

// True when `text` holds a '?' outside quoted strings (that is, it is a query).
bool has_query_mark(std::string_view text) {
  char quote = 0;
  for (const char c : text) {
    if (quote != 0) {
      if (c == quote) quote = 0;
    } else if (c == '"' || c == '\'') {
      quote = c;
    } else if (c == '?') {
      return true;
    }
  }
  return false;
}

// Builds and checks one dialect; every failure names the origin and the JSON path.
class Checker {
 public:
  explicit Checker(std::string origin) : origin_(std::move(origin)) {}

  [[noreturn]] void fail(const std::string& path, const std::string& message) const {
    if (path.empty()) throw DialectError(origin_ + ": " + message);
    throw DialectError(origin_ + ": " + path + ": " + message);
  }

  // Checks one command template; adds the placeholders it uses to `used`.
  void check_template(const json& value, const std::string& path, const OperationRule& rule,
                      bool is_query, std::vector<std::string>& used) const {
    if (!value.is_string()) fail(path, "must be a string (an SCPI command template)");
    const auto& text = value.get_ref<const std::string&>();
    if (text.find_first_not_of(" \t") == std::string::npos) fail(path, "must not be empty");
    for (const char c : text) {
      const auto byte = static_cast<unsigned char>(c);
      if (byte < 0x20 || byte == 0x7f) {
        fail(path, fmt::format("control character \\x{:02X} is not allowed (one command per "
                               "entry; the transport adds the terminator)",
                               byte));
      }
    }
    std::vector<Piece> pieces;
    if (auto problem = split_template(text, pieces); !problem.empty()) {
      fail(path, fmt::format("{} in \"{}\"", problem, text));
    }
    for (const auto& piece : pieces) {
      if (!piece.is_placeholder) continue;
      const auto& allowed = rule.placeholders;
      if (std::find(allowed.begin(), allowed.end(), piece.text) == allowed.end()) {
        fail(path, fmt::format("unknown placeholder {{{}}}; allowed: {}", piece.text,
                               placeholder_list(allowed)));
      }
      used.push_back(piece.text);
    }
    if (is_query && !has_query_mark(text)) {
      fail(path,
           fmt::format("\"{}\" is not a query (an SCPI query ends its header with '?')", text));
    }
    if (!is_query && has_query_mark(text)) {
      fail(path, fmt::format("\"{}\" is a query; put it in \"query\" so its reply is read", text));
    }
  }

  Dialect::Operation check_operation(const json& value, const std::string& path,
                                     const OperationRule& rule) const {
    if (!value.is_object()) fail(path, "must be an object with \"send\" and/or \"query\"");
    for (const auto& item : value.items()) {
      const auto& key = item.key();
      if (key != "send" && key != "query" && key != "response" && key != "scale") {
        fail(path + "." + key, "unknown key; allowed: send, query, response, scale");
      }
    }

    Dialect::Operation op;
    std::vector<std::string> used;
    if (value.contains("send")) {
      const auto& send = value["send"];
      if (!send.is_array() || send.empty()) {
        fail(path + ".send", "must be a non-empty array of command templates");
      }
      for (std::size_t i = 0; i < send.size(); ++i) {
        check_template(send[i], fmt::format("{}.send[{}]", path, i), rule, false, used);
        op.send.push_back(send[i].get<std::string>());
      }
    }
    if (value.contains("query")) {
      check_template(value["query"], path + ".query", rule, true, used);
      op.query = value["query"].get<std::string>();
    }
    if (op.send.empty() && !op.query) fail(path, "needs \"send\", \"query\" or both");

    if (value.contains("response")) {
      const auto& response = value["response"];
      if (!op.query) fail(path + ".response", "is allowed only together with \"query\"");
      const auto type = response.is_string()
                            ? response_type_named(response.get<std::string>())
                            : std::nullopt;
      if (!type) {
        fail(path + ".response",
             fmt::format("unknown response type {}; expected one of number, number_list, "
                         "boolean, integer, string",
                         response.dump()));
      }
      op.response = *type;
    } else if (op.query) {
      fail(path, "has a \"query\" but no \"response\" (one of number, number_list, boolean, "
                 "integer, string)");
    }

    if (rule.answer) {
      if (!op.query) {
        fail(path, fmt::format("must have a \"query\" answering \"{}\"", to_string(*rule.answer)));
      }
      if (op.response != *rule.answer) {
        fail(path + ".response",
             fmt::format("\"{}\" is the wrong type; {} must answer \"{}\"", to_string(op.response),
                         rule.name, to_string(*rule.answer)));
      }
    }

    if (value.contains("scale")) {
      const auto& scale = value["scale"];
      if (!scale.is_number()) fail(path + ".scale", "must be a number");
      op.scale = scale.get<double>();
      if (!std::isfinite(op.scale) || op.scale == 0.0) {
        fail(path + ".scale", "must be a finite number other than zero");
      }
      const bool numeric = op.response == ResponseType::number ||
                           op.response == ResponseType::number_list;
      if (!rule.answer || !numeric) {
        fail(path + ".scale", "applies only to an operation that returns a number");
      }
    }

    if (rule.needs_placeholder && used.empty()) {
      fail(path, fmt::format("uses none of its values; expected {}",
                             rule.placeholders.size() == 1
                                 ? placeholder_list(rule.placeholders)
                                 : "at least one of " + placeholder_list(rule.placeholders)));
    }
    return op;
  }

 private:
  std::string origin_;
};

}  // namespace

const char* to_string(ResponseType type) {
  switch (type) {
    case ResponseType::number: return "number";
    case ResponseType::number_list: return "number_list";
    case ResponseType::boolean: return "boolean";
    case ResponseType::integer: return "integer";
    case ResponseType::string: return "string";
  }
  return "unknown";
}

Dialect Dialect::load_file(const std::string& path) {
  std::ifstream in(path);
  if (!in) {
    const auto reason = std::error_code(errno, std::generic_category()).message();
    throw DialectError(fmt::format("{}: cannot open dialect file ({})", path, reason));
  }
  json document;
  try {
    document = json::parse(in);
  } catch (const json::parse_error& e) {
    throw DialectError(fmt::format("{}: not valid JSON: {}", path, e.what()));
  }
  return from_json(document, path);
}

Dialect Dialect::from_json(const nlohmann::json& document, const std::string& origin) {
  const Checker check(origin);
  if (!document.is_object()) {
    check.fail("", "a dialect must be a JSON object with \"role\" and \"operations\"");
  }
  for (const auto& item : document.items()) {
    const auto& key = item.key();
    if (key != "role" && key != "description" && key != "operations") {
      check.fail(key, "unknown key; allowed: role, description, operations");
    }
  }

  Dialect dialect;
  dialect.origin_ = origin;

  if (!document.contains("role")) check.fail("role", "is missing (source, meter, load or switch)");
  if (!document["role"].is_string()) check.fail("role", "must be a string: source, meter, load or switch");
  dialect.role_ = document["role"].get<std::string>();
  const RoleRule* role = find_role(dialect.role_);
  if (role == nullptr) {
    check.fail("role", fmt::format("unknown role \"{}\"; expected source, meter, load or switch",
                                   dialect.role_));
  }

  if (document.contains("description")) {
    if (!document["description"].is_string()) check.fail("description", "must be a string");
    dialect.description_ = document["description"].get<std::string>();
  }

  if (!document.contains("operations")) check.fail("operations", "is missing");
  const auto& operations = document["operations"];
  if (!operations.is_object()) check.fail("operations", "must be an object of operations");
  for (const auto& item : operations.items()) {
    const std::string path = "operations." + item.key();
    const OperationRule* rule = find_operation(*role, item.key());
    if (rule == nullptr) {
      check.fail(path, fmt::format("unknown operation; role {} has {}", role->role,
                                   operation_names(*role)));
    }
    dialect.operations_[item.key()] = check.check_operation(item.value(), path, *rule);
  }
  for (const auto& rule : role->operations) {
    if (dialect.operations_.count(rule.name) == 0) {
      check.fail("", fmt::format("operation \"{}\" is missing (role {} requires {})", rule.name,
                                 role->role, operation_names(*role)));
    }
  }
  return dialect;
}

const Dialect::Operation& Dialect::operation(const std::string& name) const {
  const auto found = operations_.find(name);
  if (found == operations_.end()) {
    throw std::logic_error(fmt::format("{}: dialect has no operation \"{}\"", origin_, name));
  }
  return found->second;
}

std::vector<std::string> Dialect::render_send(const std::string& name, const Values& values) const {
  std::vector<std::string> commands;
  for (const auto& command_template : operation(name).send) {
    commands.push_back(render(command_template, values));
  }
  return commands;
}

std::string Dialect::render_query(const std::string& name, const Values& values) const {
  const auto& op = operation(name);
  if (!op.query) {
    throw std::logic_error(fmt::format("{}: operation \"{}\" has no query", origin_, name));
  }
  return render(*op.query, values);
}

std::string Dialect::render(std::string_view command_template, const Values& values) {
  std::vector<Piece> pieces;
  if (auto problem = split_template(command_template, pieces); !problem.empty()) {
    throw std::logic_error(fmt::format("template \"{}\": {}", command_template, problem));
  }
  std::string out;
  for (const auto& piece : pieces) {
    if (!piece.is_placeholder) {
      out += piece.text;
      continue;
    }
    const auto found = values.find(piece.text);
    if (found == values.end()) {
      throw std::logic_error(
          fmt::format("template \"{}\": no value for {{{}}}", command_template, piece.text));
    }
    if (!std::isfinite(found->second)) {
      throw std::logic_error(fmt::format("template \"{}\": {{{}}} is not finite ({})",
                                         command_template, piece.text, found->second));
    }
    out += fmt::format("{:.10g}", found->second);
  }
  return out;
}

std::vector<std::string> Dialect::required_operations(const std::string& role) {
  std::vector<std::string> names;
  if (const RoleRule* rule = find_role(role)) {
    for (const auto& op : rule->operations) names.push_back(op.name);
  }
  return names;
}

std::vector<std::string> Dialect::allowed_placeholders(const std::string& role,
                                                       const std::string& operation) {
  if (const RoleRule* rule = find_role(role)) {
    if (const OperationRule* op = find_operation(*rule, operation)) return op->placeholders;
  }
  return {};
}

}  // namespace zout
