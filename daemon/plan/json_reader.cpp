#include "json_reader.h"

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "daemon/plan/bounded_json.h"
#include "daemon/plan/config_error.h"

namespace zout {
namespace {

std::string type_name(const nlohmann::json& value) {
  if (value.is_number()) return "a number";
  if (value.is_string()) return "a string";
  if (value.is_boolean()) return "a boolean";
  if (value.is_array()) return "an array";
  if (value.is_object()) return "an object";
  return "null";
}

std::string shown(const nlohmann::json& value) {
  std::string text = value.dump();
  if (text.size() > 60) text = text.substr(0, 57) + "...";
  return text;
}

}  // namespace

JsonReader::JsonReader(const nlohmann::json& value, std::string path, std::string origin)
    : value_(value), path_(std::move(path)), origin_(std::move(origin)) {}

nlohmann::json JsonReader::parse_file(const std::string& file_path) {
  // A regular file only: reading a FIFO or a device could block for ever, and a file past
  // the cap is no plan, bench or dialect zout wrote.
  std::error_code error;
  const auto status = std::filesystem::status(file_path, error);
  if (error || !std::filesystem::exists(status)) throw ConfigError(fmt::format("{}: cannot open file", file_path));
  if (!std::filesystem::is_regular_file(status)) {
    throw ConfigError(fmt::format("{}: not a regular file (a directory, FIFO or device is refused)", file_path));
  }
  const auto size = std::filesystem::file_size(file_path, error);
  if (error || size > max_file_bytes) {
    throw ConfigError(fmt::format("{}: larger than {} bytes; refused", file_path, max_file_bytes));
  }
  std::ifstream in(file_path);
  if (!in) throw ConfigError(fmt::format("{}: cannot open file", file_path));
  std::stringstream text;
  text << in.rdbuf();
  try {
    return parse_bounded_json(text.str());
  } catch (const JsonRefused& e) {
    throw ConfigError(fmt::format("{}: not valid JSON: {}", file_path, e.what()));
  }
}

void JsonReader::fail(const std::string& rule) const {
  throw ConfigError(fmt::format("{}: {}: {}", origin_, path_, rule));
}

void JsonReader::require_object() const {
  if (!value_.is_object()) fail(fmt::format("must be an object, not {}", type_name(value_)));
}

bool JsonReader::has(const std::string& key) const { return value_.is_object() && value_.contains(key); }

JsonReader JsonReader::member(const std::string& key) {
  require_object();
  asked_.insert(key);
  const auto found = value_.find(key);
  if (found == value_.end()) fail(fmt::format("\"{}\" is required", key));
  return JsonReader(*found, path_ + "." + key, origin_);
}

std::optional<JsonReader> JsonReader::optional_member(const std::string& key) {
  require_object();
  asked_.insert(key);
  const auto found = value_.find(key);
  if (found == value_.end()) return std::nullopt;
  return JsonReader(*found, path_ + "." + key, origin_);
}

void JsonReader::refuse_unknown_keys() const {
  require_object();
  for (const auto& [key, unused] : value_.items()) {
    if (!asked_.count(key)) {
      std::string known;
      for (const auto& k : asked_) known += (known.empty() ? "" : ", ") + k;
      throw ConfigError(fmt::format("{}: {}.{}: unknown key; allowed here: {}", origin_, path_, key, known));
    }
  }
}

std::vector<JsonReader> JsonReader::elements(std::size_t min_count, std::size_t max_count) const {
  if (!value_.is_array()) fail(fmt::format("must be an array, not {}", type_name(value_)));
  if (value_.size() < min_count) fail(fmt::format("needs at least {} entries, has {}", min_count, value_.size()));
  if (value_.size() > max_count) fail(fmt::format("allows at most {} entries, has {}", max_count, value_.size()));
  std::vector<JsonReader> out;
  for (std::size_t i = 0; i < value_.size(); ++i) {
    out.emplace_back(value_[i], fmt::format("{}[{}]", path_, i), origin_);
  }
  return out;
}

double JsonReader::number(double min, double max) const {
  if (!value_.is_number()) fail(fmt::format("must be a number, not {} ({})", type_name(value_), shown(value_)));
  const double x = value_.get<double>();
  if (!std::isfinite(x)) fail("must be a finite number");
  if (x < min) {
    if (min == 0.0) fail(fmt::format("{} is negative; must be >= 0", shown(value_)));
    fail(fmt::format("{} is below the minimum {}", shown(value_), min));
  }
  if (x > max) fail(fmt::format("{} is above the maximum {}", shown(value_), max));
  return x;
}

long long JsonReader::integer(long long min, long long max) const {
  if (!value_.is_number_integer()) fail(fmt::format("must be a whole number, not {}", shown(value_)));
  const long long x = value_.get<long long>();
  if (x < min || x > max) fail(fmt::format("{} is out of range; allowed: {} to {}", x, min, max));
  return x;
}

bool JsonReader::boolean() const {
  if (!value_.is_boolean()) fail(fmt::format("must be true or false, not {}", shown(value_)));
  return value_.get<bool>();
}

std::string JsonReader::string(bool allow_empty) const {
  if (!value_.is_string()) fail(fmt::format("must be a string, not {} ({})", type_name(value_), shown(value_)));
  std::string s = value_.get<std::string>();
  if (!allow_empty && s.empty()) fail("must not be empty");
  return s;
}

std::string JsonReader::name(std::size_t max_characters) const {
  std::string s = string();
  std::size_t characters = 0;
  for (const unsigned char c : s) characters += (c & 0xC0) != 0x80;  // UTF-8 code points
  if (characters > max_characters) {
    fail(fmt::format("is {} characters long; at most {} are allowed", characters, max_characters));
  }
  return s;
}

std::string JsonReader::choice(const std::vector<std::string>& choices) const {
  const std::string s = string();
  for (const auto& c : choices) {
    if (s == c) return s;
  }
  std::string allowed;
  for (const auto& c : choices) allowed += (allowed.empty() ? "" : ", ") + c;
  fail(fmt::format("\"{}\" is not allowed; allowed: {}", s, allowed));
}

}  // namespace zout
