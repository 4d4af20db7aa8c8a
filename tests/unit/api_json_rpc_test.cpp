// The control socket's parsing of a client's bytes and the file loaders' parsing of JSON: every
// malformed input becomes a refusal that names what is wrong, never a crash or a stray
// exception. Cases from the hardening issue's defects 1-4 and 7 (nesting, bytes >= 0x80,
// numbers past a double, a non-string "jsonrpc", batches, params a method does not take).
#include <catch2/catch.hpp>

#include <sys/stat.h>

#include <fstream>

#include "daemon/api/json_rpc.h"
#include "daemon/plan/bounded_json.h"
#include "daemon/plan/config_error.h"
#include "daemon/plan/json_reader.h"
#include "daemon/plan/plan.h"
#include "tests/support/temp_dir.h"

using namespace zout;
using nlohmann::json;

namespace {

std::string nested(std::size_t levels, const std::string& open = "[", const std::string& close = "]") {
  std::string text;
  text.reserve(levels * (open.size() + close.size()) + 1);
  for (std::size_t i = 0; i < levels; ++i) text += open;
  text += "0";
  for (std::size_t i = 0; i < levels; ++i) text += close;
  return text;
}

// The error response parse_message gives instead of JSON; fails the test if it parsed.
json refusal_of(const std::string& line) {
  auto message = rpc::parse_message(line);
  REQUIRE(message.index() == 1);
  return std::get<1>(message);
}

}  // namespace

TEST_CASE("parse_bounded_json accepts nesting to the limit and refuses one level more", "[api][hardening]") {
  CHECK(parse_bounded_json(nested(max_json_depth)).is_array());
  CHECK_THROWS_WITH(parse_bounded_json(nested(max_json_depth + 1)), Catch::Contains("nested deeper than 64"));
  // About 100k levels, the size of line that killed zoutd: refused at level 65, long before
  // anything recursive could run.
  CHECK_THROWS_AS(parse_bounded_json(nested(100'000)), JsonRefused);
  CHECK_THROWS_AS(parse_bounded_json(nested(1'000'000, "{\"a\":", "}")), JsonRefused);
}

TEST_CASE("parse_bounded_json refuses numbers past a double and shows odd bytes escaped", "[api][hardening]") {
  CHECK_THROWS_WITH(parse_bounded_json(R"({"run_id":1e400})"), Catch::Contains("out of range"));
  CHECK_THROWS_WITH(parse_bounded_json("{\"x\":" + std::string(400, '9') + "}"), Catch::Contains("out of range"));
  CHECK(parse_bounded_json("1e308").get<double>() == 1e308);
  try {
    parse_bounded_json("\xff\n");
    FAIL("\\xff accepted");
  } catch (const JsonRefused& e) {
    const std::string what = e.what();
    CHECK(what.find('\xff') == std::string::npos);  // never the raw byte
    CHECK_THAT(what, Catch::Contains("\\xff"));
  }
  CHECK(escaped_bytes("a\\b\x01\xc3") == "a\\\\b\\x01\\xc3");
  // safe_dump replaces invalid UTF-8 instead of throwing (nlohmann's dump would throw type_error.316).
  CHECK(safe_dump(json("ok \xff")) == "\"ok \xef\xbf\xbd\"");
}

TEST_CASE("parse_message turns every malformed line into a -32700 reply that can itself be sent", "[api][hardening]") {
  for (const std::string& line : {nested(100'000), std::string("\xff"), std::string(R"({"run_id":1e400})"),
                                  "{\"jsonrpc\":\"2.0\",\"id\":" + std::string(400, '1') + "}", std::string("{not json")}) {
    const json reply = refusal_of(line);
    CHECK(reply.at("error").at("code") == rpc::parse_error);
    CHECK(reply.at("id").is_null());
    CHECK_NOTHROW(reply.dump());  // the reply is valid UTF-8 as it stands
  }
}

TEST_CASE("parse_request checks jsonrpc, id, method and params without throwing on odd types", "[api][hardening]") {
  const auto code_of = [](const std::string& line) {
    auto message = rpc::parse_message(line);
    REQUIRE(message.index() == 0);
    auto request = rpc::parse_request(std::get<0>(message));
    REQUIRE(request.index() == 1);
    return std::get<1>(request).at("error").at("code").get<int>();
  };
  CHECK(code_of(R"({"jsonrpc":null,"id":1,"method":"run.list"})") == rpc::invalid_request);
  CHECK(code_of(R"({"jsonrpc":2.0,"id":1,"method":"run.list"})") == rpc::invalid_request);
  CHECK(code_of(R"({"id":1,"method":"run.list"})") == rpc::invalid_request);
  CHECK(code_of(R"({"jsonrpc":"2.0","id":1.5,"method":"run.list"})") == rpc::invalid_request);
  CHECK(code_of(R"({"jsonrpc":"2.0","id":1,"method":7})") == rpc::invalid_request);
  CHECK(code_of(R"({"jsonrpc":"2.0","id":1,"method":"run.list","params":3})") == rpc::invalid_request);
  CHECK(code_of(R"({"jsonrpc":"2.0","id":1,"method":"run.list","extra":0})") == rpc::invalid_request);
  CHECK(code_of("[1]") == rpc::invalid_request);  // not an object (a batch element is checked the same way)
  auto ok = rpc::parse_request(json::parse(R"({"jsonrpc":"2.0","id":"a","method":"run.list"})"));
  REQUIRE(ok.index() == 0);
  CHECK(std::get<0>(ok).method == "run.list");
  CHECK(std::get<0>(ok).params == json::object());
  CHECK_FALSE(std::get<0>(ok).is_notification);
}

TEST_CASE("plan and bench files: only regular files, bounded in size and depth, numbers within a double", "[plan][hardening]") {
  test::TempDir dir("zout-bounded-files");
  const std::string fifo = (dir.path / "plan.fifo").string();
  REQUIRE(::mkfifo(fifo.c_str(), 0600) == 0);
  CHECK_THROWS_WITH(JsonReader::parse_file(fifo), Catch::Contains("not a regular file"));  // and does not block
  CHECK_THROWS_WITH(JsonReader::parse_file(dir.path.string()), Catch::Contains("not a regular file"));

  const auto write = [&](const std::string& name, const std::string& text) {
    const auto path = (dir.path / name).string();
    std::ofstream(path) << text;
    return path;
  };
  const auto deep = write("deep.json", nested(1'000'000));  // 2 MB, under the size cap
  CHECK_THROWS_AS(load_plan_file(deep), ConfigError);
  CHECK_THROWS_WITH(load_plan_file(deep), Catch::Contains(deep) && Catch::Contains("nested deeper"));
  const auto overflow = write("overflow.json", R"({"name":"x","source":{"frequency_hz":1e309}})");
  CHECK_THROWS_WITH(load_plan_file(overflow), Catch::Contains(overflow) && Catch::Contains("out of range"));
  const auto big = write("big.json", "[" + std::string(JsonReader::max_file_bytes, ' ') + "]");
  CHECK_THROWS_WITH(load_plan_file(big), Catch::Contains("larger than"));
}

TEST_CASE("a plan name, station name or serial the store could not keep is refused when the file loads", "[plan][hardening]") {
  // The schema keeps names of 1 to 200 characters (schema/001_tables.sql: length(name) BETWEEN 1 AND 200).
  const json at_limit = std::string(200, 'n');
  const json over = std::string(201, 'n');
  const json ten_megabytes = std::string(10'000'000, 'n');
  CHECK(JsonReader(at_limit, "plan.name", "p.json").name() == at_limit.get<std::string>());
  {
    std::string omegas;
    for (int i = 0; i < 200; ++i) omegas += "Ω";  // 200 characters, 400 bytes
    CHECK(JsonReader(json(omegas), "plan.name", "p.json").name() == omegas);
  }
  CHECK_THROWS_WITH(JsonReader(over, "plan.name", "p.json").name(),
                    Catch::Contains("p.json: plan.name: is 201 characters long; at most 200"));
  CHECK_THROWS_AS(JsonReader(ten_megabytes, "plan.name", "p.json").name(), ConfigError);
  CHECK_THROWS_AS(JsonReader(json(""), "plan.name", "p.json").name(), ConfigError);
}
