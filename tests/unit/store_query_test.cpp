// ReadOnlyQuery in-process on a real file: typed values, the refusals by name, one statement
// at a time, the time limit; and the cell and CSV formatting of `zout query`.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <sstream>

#include "tests/support/temp_dir.h"
#include "daemon/cli/query_command.h"
#include "daemon/store/read_only_query.h"
#include "daemon/store/store_error.h"
#include "daemon/store/store_writer.h"

using namespace zout::store;
namespace fs = std::filesystem;
using zout::test::TempDir;
using zout::test::file_bytes;

namespace {

struct Outcome {
  StoreError::Kind kind;
  std::string message;
};

Outcome failure_of(const fs::path& db, const std::string& sql, std::chrono::milliseconds limit = std::chrono::milliseconds(0)) {
  ReadOnlyQuery query(db);
  try {
    query.run(sql, limit, [](const auto&) {}, [](const auto&) {});
  } catch (const StoreError& e) {
    return {e.kind(), e.what()};
  }
  FAIL("ran without refusal: " << sql);
  return {StoreError::Kind::failure, ""};
}

// A store written by StoreWriter and then closed, so its main file is settled.
fs::path make_store(const TempDir& dir) {
  const fs::path file = dir.path / "z.db";
  StoreWriter writer(file);
  writer.record_station("line-1", std::chrono::system_clock::now());
  return file;
}

}  // namespace

TEST_CASE("a query returns column names and typed values in order", "[store]") {
  TempDir dir("zout-store-query");
  const fs::path db = make_store(dir);
  ReadOnlyQuery query(db);
  std::vector<std::string> names;
  std::vector<std::vector<QueryValue>> rows;
  query.run("SELECT 42 AS n, 2.5 AS x, 'line' AS t, NULL AS z, x'00ff' AS b UNION ALL SELECT -1, 1e300, '', NULL, x''",
            std::chrono::milliseconds(1000), [&](const auto& columns) { names = columns; },
            [&](const std::vector<QueryValue>& row) { rows.push_back(row); });
  REQUIRE(names == std::vector<std::string>{"n", "x", "t", "z", "b"});
  REQUIRE(rows.size() == 2);
  REQUIRE(rows[0][0] == QueryValue{std::int64_t{42}});
  REQUIRE(rows[0][1] == QueryValue{2.5});
  REQUIRE(rows[0][2] == QueryValue{std::string("line")});
  REQUIRE(std::holds_alternative<std::monostate>(rows[0][3]));
  REQUIRE(std::get<QueryBlob>(rows[0][4]).bytes == std::vector<unsigned char>{0x00, 0xff});
  REQUIRE(rows[1][1] == QueryValue{1e300});
  REQUIRE(zout::cli::cell_text(rows[0][4]) == "X'00FF'");
}

TEST_CASE("a query refuses writes, attachments, settings and extensions by name, and changes nothing", "[store]") {
  TempDir dir("zout-store-query");
  const fs::path db = make_store(dir);
  const std::string before = file_bytes(db);
  const std::vector<std::pair<std::string, std::string>> refused = {
      {"INSERT INTO station (name, first_seen_at, last_seen_at) VALUES ('x', '', '')", "INSERT into station"},
      {"UPDATE station SET name = 'x'", "UPDATE of station.name"},
      {"DELETE FROM station", "DELETE from station"},
      {"DROP TABLE reading", "DROP TABLE reading"},
      {"DROP VIEW run_summary", "DROP VIEW run_summary"},
      {"CREATE TABLE t (x)", "CREATE TABLE t"},
      {"CREATE TEMP VIEW v AS SELECT 1", "CREATE VIEW v"},
      {"ALTER TABLE unit ADD COLUMN colour TEXT", "ALTER TABLE unit"},
      {"ATTACH DATABASE '" + (dir.path / "other.db").string() + "' AS other", "ATTACH of another database file"},
      {"DETACH DATABASE main", "DETACH main"},
      {"PRAGMA journal_mode = DELETE", "PRAGMA journal_mode = DELETE"},
      {"PRAGMA user_version = 5", "PRAGMA user_version = 5"},
      {"PRAGMA query_only = OFF", "PRAGMA query_only = OFF"},
      {"SELECT load_extension('x')", "the function load_extension()"},
      {"BEGIN", "transaction control"},
      {"VACUUM INTO '" + (dir.path / "copy.db").string() + "'", "would write"},
      {"REINDEX", "REINDEX"},
  };
  for (const auto& [sql, what] : refused) {
    INFO(sql);
    const Outcome outcome = failure_of(db, sql);
    REQUIRE(outcome.kind == StoreError::Kind::refused);
    REQUIRE_THAT(outcome.message, Catch::StartsWith("refused: ") &&
                                      Catch::Contains(what) && Catch::Contains("zout query only reads"));
  }
  REQUIRE(file_bytes(db) == before);
  REQUIRE_FALSE(fs::exists(dir.path / "other.db"));
  REQUIRE_FALSE(fs::exists(dir.path / "copy.db"));
}

TEST_CASE("a query may read the schema with PRAGMAs that only look", "[store]") {
  TempDir dir("zout-store-query");
  const fs::path db = make_store(dir);
  ReadOnlyQuery query(db);
  for (const std::string sql : {"PRAGMA table_info(station)", "SELECT name FROM pragma_table_info('station')",
                                "PRAGMA user_version", "PRAGMA integrity_check"}) {
    INFO(sql);
    std::vector<std::vector<QueryValue>> rows;
    query.run(sql, std::chrono::milliseconds(5000), [](const auto&) {}, [&](const auto& row) { rows.push_back(row); });
    REQUIRE_FALSE(rows.empty());
  }
}

TEST_CASE("a query is one statement of valid SQL", "[store]") {
  TempDir dir("zout-store-query");
  const fs::path db = make_store(dir);
  Outcome two = failure_of(db, "SELECT 1; SELECT 2");
  REQUIRE(two.kind == StoreError::Kind::bad_sql);
  REQUIRE_THAT(two.message, Catch::Contains("one statement at a time") && Catch::Contains("SELECT 2"));
  Outcome sneaky = failure_of(db, "SELECT 1; DELETE FROM station");
  REQUIRE(sneaky.kind == StoreError::Kind::bad_sql);
  Outcome typo = failure_of(db, "SELEC * FROM station");
  REQUIRE(typo.kind == StoreError::Kind::bad_sql);
  REQUIRE_THAT(typo.message, Catch::Contains("syntax error"));
  Outcome empty = failure_of(db, "  -- nothing\n");
  REQUIRE(empty.kind == StoreError::Kind::bad_sql);
  // A trailing semicolon and comment are fine.
  ReadOnlyQuery query(db);
  int rows = 0;
  query.run("SELECT 1; -- done", std::chrono::milliseconds(1000), [](const auto&) {}, [&](const auto&) { ++rows; });
  REQUIRE(rows == 1);
}

TEST_CASE("a runaway query is stopped at its time limit", "[store]") {
  TempDir dir("zout-store-query");
  const fs::path db = make_store(dir);
  const auto start = std::chrono::steady_clock::now();
  const Outcome outcome =
      failure_of(db, "WITH RECURSIVE n(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM n) SELECT count(*) FROM n",
                 std::chrono::milliseconds(200));
  const auto elapsed = std::chrono::steady_clock::now() - start;
  REQUIRE(outcome.kind == StoreError::Kind::timed_out);
  REQUIRE_THAT(outcome.message, Catch::Contains("time limit of 200 ms"));
  REQUIRE(elapsed < std::chrono::seconds(10));  // a bound on the test, not a speed target
}

TEST_CASE("a missing database is an error naming the file", "[store]") {
  TempDir dir("zout-store-query");
  try {
    ReadOnlyQuery query(dir.path / "absent.db");
    FAIL("opened a missing file");
  } catch (const StoreError& e) {
    REQUIRE_THAT(e.what(), Catch::Contains("absent.db") && Catch::Contains("no such file"));
  }
  REQUIRE_FALSE(fs::exists(dir.path / "absent.db"));
}

TEST_CASE("cells print reals exactly and never like integers, CSV fields quote per RFC 4180", "[store][cli]") {
  using zout::cli::cell_text;
  using zout::cli::csv_field;
  REQUIRE(cell_text(QueryValue{2.0}) == "2.0");
  REQUIRE(cell_text(QueryValue{0.1}) == "0.1");
  REQUIRE(cell_text(QueryValue{1.2e-7}) == "1.2e-07");
  REQUIRE(cell_text(QueryValue{1200000.0}) == "1200000.0");
  REQUIRE(cell_text(QueryValue{std::int64_t{-7}}) == "-7");
  REQUIRE(cell_text(QueryValue{}) == "");
  REQUIRE(csv_field("plain") == "plain");
  REQUIRE(csv_field("a,b") == "\"a,b\"");
  REQUIRE(csv_field("say \"hi\"") == "\"say \"\"hi\"\"\"");
  REQUIRE(csv_field("two\nlines") == "\"two\nlines\"");
  REQUIRE(csv_field("") == "");
}
