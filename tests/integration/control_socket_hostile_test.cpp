// A real zoutd, mid-run, fed the lines that used to kill it (the hardening issue's defects 1-4
// and 7): each gets its error reply, the daemon keeps answering, and the run it was measuring
// ends as it would have, with the bench left safe.
#include <catch2/catch.hpp>

#include <thread>

#include "daemon/api/json_rpc.h"
#include "tests/integration/daemon_bench.h"

using namespace zout;
using namespace zout::test;

namespace {

std::string nested_array(std::size_t levels) { return std::string(levels, '[') + "0" + std::string(levels, ']'); }

}  // namespace

TEST_CASE("zoutd answers hostile lines with their error replies while a run goes on", "[daemon][hardening]") {
  Bench bench;
  bench.client->call("events.subscribe", json::object());
  const auto ids = bench.start(json::array({{{"serial", "IT-0001"}, {"slot", 1}}}));
  // The first point lands: the run is driving the unit.
  for (int i = 0; i < 60; ++i) {
    const auto message = bench.client->next_notification(1000ms);
    if (message && message->at("method") == "point") break;
  }

  // 1. About 100k levels of nesting (a 200 KB line, under the 1 MiB cap), in params and in id.
  const std::string deep = nested_array(100'000);
  json reply = bench.client->call_raw(R"({"jsonrpc":"2.0","id":1,"method":"run.list","params":)" + deep + "}");
  CHECK(reply.at("error").at("code") == -32700);
  reply = bench.client->call_raw(R"({"jsonrpc":"2.0","method":"run.list","id":)" + deep + "}");
  CHECK(reply.at("error").at("code") == -32700);
  // 2. A byte >= 0x80 that breaks parsing: the reply shows it escaped.
  reply = bench.client->call_raw("\xff");
  CHECK(reply.at("error").at("code") == -32700);
  CHECK_THAT(reply.at("error").at("message").get<std::string>(), Catch::Contains("\\xff"));
  // 3. Numbers past a double.
  CHECK(bench.client->call_raw(R"({"jsonrpc":"2.0","id":3,"method":"run.get","params":{"run_id":1e400}})")
            .at("error").at("code") == -32700);
  CHECK(bench.client->call_raw(R"({"jsonrpc":"2.0","id":4,"method":"run.get","params":{"run_id":)" +
                               std::string(400, '9') + "}}")
            .at("error").at("code") == -32700);
  // 4. A "jsonrpc" that is not a string.
  CHECK(bench.client->call_raw(R"({"jsonrpc":null,"id":5,"method":"run.list"})").at("error").at("code") == -32600);
  CHECK(bench.client->call_raw(R"({"jsonrpc":2.0,"id":6,"method":"run.list"})").at("error").at("code") == -32600);
  // 7. A batch gets an array of replies (JSON-RPC 2.0 §6), notifications in it none.
  reply = bench.client->call_raw(
      R"([{"jsonrpc":"2.0","id":7,"method":"run.get","params":{"run_id":)" + std::to_string(ids[0]) +
      R"(}},{"jsonrpc":"2.0","method":"run.list"},{"jsonrpc":"2.0","id":8,"method":"no.such"},3])");
  REQUIRE(reply.is_array());
  REQUIRE(reply.size() == 3);
  CHECK(reply[0].at("id") == 7);
  CHECK(reply[0].at("result").at("state") == "running");
  CHECK(reply[1].at("error").at("code") == -32601);
  CHECK(reply[2].at("error").at("code") == -32600);
  CHECK(bench.client->call_raw("[]").at("error").at("code") == -32600);
  //    A method refuses params it does not take.
  CHECK(bench.client->call_raw(R"({"jsonrpc":"2.0","id":9,"method":"bench.describe","params":{"verbose":true}})")
            .at("error").at("code") == -32602);
  CHECK(bench.client->call_raw(R"({"jsonrpc":"2.0","id":10,"method":"events.subscribe","params":[1]})")
            .at("error").at("code") == -32602);

  // The daemon still serves, and the run it was measuring ends as it would have.
  ControlClient fresh(bench.dir + "/zoutd.sock");
  CHECK(fresh.call("bench.describe", json::object()).at("station") == "test-bench");
  CHECK(bench.wait_final(ids[0], 120s) == "passed");
  CHECK_FALSE(bench.instrument_state_on("source", "OUTP?"));
  CHECK_FALSE(bench.instrument_state_on("load", "INP?"));
}

TEST_CASE("zoutd refuses clients past its bound politely, and serves again after running out of descriptors",
          "[daemon][hardening]") {
  Bench bench;
  const std::string socket = bench.dir + "/zoutd.sock";
  {
    // Past max_clients (256): the extra ones are told so and closed; the others are served.
    std::vector<std::unique_ptr<ControlClient>> clients;
    for (int i = 0; i < 255; ++i) clients.push_back(std::make_unique<ControlClient>(socket));  // bench.client is the 256th
    CHECK(clients.back()->call("run.list", json::object()).at("runs").empty());
    int refused = 0;
    for (int i = 0; i < 10; ++i) {
      ControlClient extra(socket);
      try {
        extra.call("run.list", json::object(), 2000ms);
      } catch (const ControlCallError& e) {
        CHECK(e.code() == rpc::refused);
        CHECK_THAT(e.what(), Catch::Contains("at most 256"));
        ++refused;
      }
    }
    CHECK(refused == 10);
  }
  // Under a soft limit of 64 descriptors (prlimit, util-linux), 200 connections run zoutd out
  // of them; once they are gone it answers again (it used to stop accepting for good).
  bench.client.reset();
  bench.daemon.reset();
  bench.daemon = std::make_unique<SimProcess>(
      std::vector<std::string>{"/usr/bin/prlimit", "--nofile=64:64", ZOUTD_PATH, "--bench", bench.bench_path}, 15s);
  {
    std::vector<std::unique_ptr<ControlClient>> flood;
    for (int i = 0; i < 200; ++i) {
      try {
        flood.push_back(std::make_unique<ControlClient>(socket));
      } catch (const std::exception&) {
        break;  // the listen backlog is full: enough
      }
    }
    CHECK(flood.size() > 64);
    std::this_thread::sleep_for(500ms);
  }
  ControlClient after(socket);
  CHECK(after.call("bench.describe", json::object(), 10s).at("station") == "test-bench");
}
