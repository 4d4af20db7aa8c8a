#pragma once
// A dialect maps each abstract operation of one role (source, meter, load) to SCPI command
// templates with {placeholders}. It is read from a JSON file (format: config/dialects/README.md)
// and fully checked on loading, so a loaded dialect can always be rendered for its role.

#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json_fwd.hpp>

namespace zout {

// How the reply to an operation's query is read.
enum class ResponseType {
  number,       // one SCPI number (parse_number)
  number_list,  // comma-separated numbers (parse_number_list)
  boolean,      // 1/0/ON/OFF (parse_boolean)
  integer,      // NR1 integer (parse_integer)
  string,       // any text, taken as it comes
};

// The name used in dialect files ("number", "number_list", ...).
const char* to_string(ResponseType type);

class Dialect {
 public:
  // Placeholder name -> value (SI units, as the placeholder name says).
  using Values = std::map<std::string, double>;

  // One operation: the `send` commands in order, then optionally one `query` whose reply is
  // read as `response`. A numeric reply times `scale` is the operation's value in SI units.
  struct Operation {
    std::vector<std::string> send;
    std::optional<std::string> query;
    ResponseType response = ResponseType::string;  // meaningful only with a query
    double scale = 1.0;
  };

  // Reads and checks the dialect file at `path`. Throws DialectError naming the file and the
  // offending item (missing file, bad JSON with line and column, any rule broken).
  static Dialect load_file(const std::string& path);
  // Checks `json` as a dialect; `origin` (usually the file name) starts every error message.
  static Dialect from_json(const nlohmann::json& json, const std::string& origin);

  const std::string& role() const { return role_; }                // "source", "meter", "load" or "switch"
  const std::string& description() const { return description_; }  // free text, may be empty
  const std::string& origin() const { return origin_; }            // where it was loaded from

  // The operation called `name`; std::logic_error if this dialect has none (never the case
  // for an operation its role requires).
  const Operation& operation(const std::string& name) const;

  // The operation's send commands with every placeholder filled from `values`, in order.
  // A placeholder without a value (or with a non-finite one) is a std::logic_error.
  std::vector<std::string> render_send(const std::string& name, const Values& values) const;
  // The operation's query with its placeholders filled; std::logic_error if it has no query.
  std::string render_query(const std::string& name, const Values& values) const;

  // Fills the placeholders of one template. Numbers are written compactly with ten
  // significant digits, a valid SCPI NRf (1e-05, 50, 0.5). std::logic_error as above.
  static std::string render(std::string_view command_template, const Values& values);

  // The operations a role requires, in file order; empty for an unknown role.
  static std::vector<std::string> required_operations(const std::string& role);
  // The placeholders an operation of a role may use; empty when it takes none.
  static std::vector<std::string> allowed_placeholders(const std::string& role,
                                                       const std::string& operation);

 private:
  std::string origin_;
  std::string role_;
  std::string description_;
  std::map<std::string, Operation> operations_;
};

}  // namespace zout
