#pragma once
// A checked view of one JSON value inside a user's file. It knows its JSON path
// ("plan.load.steps_amps[3]") and the file it came from, so every refusal can name both.
// Readers of objects refuse keys they were not told about: a typo is an error, never
// silently ignored.

#include <nlohmann/json_fwd.hpp>

#include <cstdint>
#include <optional>
#include <set>
#include <string>
#include <vector>

namespace zout {

class JsonReader {
 public:
  // `value` must outlive the reader. `origin` is the file name used in messages.
  JsonReader(const nlohmann::json& value, std::string path, std::string origin);

  // The largest file parse_file reads.
  static constexpr std::uintmax_t max_file_bytes = 4 * 1024 * 1024;

  // Reads a whole regular file of at most max_file_bytes and parses it with the bounds of
  // bounded_json.h; throws ConfigError naming the file (missing, not a regular file, too
  // large, unreadable, or JSON that does not parse, nests too deep or overflows a number).
  static nlohmann::json parse_file(const std::string& file_path);

  const std::string& path() const { return path_; }
  const std::string& origin() const { return origin_; }
  const nlohmann::json& json() const { return value_; }

  // Object access. require_object() checks this value is an object; member() requires
  // the key; optional_member() returns nothing when absent. Each key read is remembered
  // for refuse_unknown_keys().
  JsonReader member(const std::string& key);
  std::optional<JsonReader> optional_member(const std::string& key);
  bool has(const std::string& key) const;
  // Throws for any key of this object that no member()/optional_member() call asked for.
  void refuse_unknown_keys() const;

  // Array access.
  std::vector<JsonReader> elements(std::size_t min_count = 0, std::size_t max_count = SIZE_MAX) const;

  // Scalars. Numbers must be finite and within [min, max]; `what` names the rule's
  // quantity in messages ("a frequency").
  double number(double min, double max) const;
  long long integer(long long min, long long max) const;
  bool boolean() const;
  std::string string(bool allow_empty = false) const;
  // A non-empty string of at most `max_characters` UTF-8 characters: a name the store keeps
  // (a plan's, a station's, a unit's serial; the schema allows max_name_characters).
  std::string name(std::size_t max_characters = max_name_characters) const;
  static constexpr std::size_t max_name_characters = 200;
  // A string that must be one of `choices`.
  std::string choice(const std::vector<std::string>& choices) const;

  // Throws ConfigError "<origin>: <path>: <rule>".
  [[noreturn]] void fail(const std::string& rule) const;

 private:
  void require_object() const;

  const nlohmann::json& value_;
  std::string path_;
  std::string origin_;
  std::set<std::string> asked_;
};

}  // namespace zout
