// The store's migrations on real SQLite files in a temporary directory: applied in order and
// recorded in PRAGMA user_version; newer, foreign and broken databases refused untouched.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "tests/support/temp_dir.h"
#include "daemon/store/database.h"
#include "daemon/store/migrations.h"
#include "daemon/store/statement.h"
#include "daemon/store/store_error.h"
#include "daemon/store/store_writer.h"

using namespace zout::store;
namespace fs = std::filesystem;
using zout::test::TempDir;
using zout::test::file_bytes;

namespace {

void write_file(const fs::path& path, const std::string& text) { std::ofstream(path, std::ios::binary) << text; }

std::vector<std::string> column_of(Database& db, const std::string& sql) {
  Statement statement = db.prepare(sql);
  std::vector<std::string> values;
  while (statement.step()) values.push_back(statement.column_text(0));
  return values;
}

StoreError::Kind kind_of_failure(const std::function<void()>& action, std::string& message) {
  try {
    action();
  } catch (const StoreError& e) {
    message = e.what();
    return e.kind();
  }
  FAIL("expected a StoreError");
  return StoreError::Kind::failure;
}

}  // namespace

TEST_CASE("a new database gets every migration, in order, recorded in user_version", "[store]") {
  TempDir dir("zout-store-migrations");
  const fs::path file = dir.path / "sub" / "zout.db";  // the directory is created too
  {
    StoreWriter writer(file);
    Database& db = writer.database();
    REQUIRE(db.pragma_int("user_version") == 4);
    REQUIRE(embedded_migrations().size() == 4);
    REQUIRE(column_of(db, "PRAGMA journal_mode") == std::vector<std::string>{"wal"});
    REQUIRE(db.pragma_int("foreign_keys") == 1);
    REQUIRE(db.pragma_int("synchronous") == 2);  // FULL (SQLite documentation, PRAGMA synchronous)
    REQUIRE(column_of(db, "SELECT name FROM sqlite_schema WHERE type = 'table' ORDER BY name") ==
            std::vector<std::string>{"event", "instrument", "plan", "point", "reading", "run", "station", "sweep",
                                     "sweep_result", "unit"});
    REQUIRE(column_of(db, "SELECT name FROM sqlite_schema WHERE type = 'view' ORDER BY name") ==
            std::vector<std::string>{"iv_curve", "run_summary", "soak_trend", "unit_history"});
    writer.record_station("line-1", std::chrono::system_clock::now());
  }
  // Opening again applies nothing and keeps the data.
  Database db(file, Database::Access::read_write_create);
  const MigrationOutcome again = apply_migrations(db, embedded_migrations());
  REQUIRE(again.from_version == 4);
  REQUIRE(again.to_version == 4);
  REQUIRE(column_of(db, "SELECT name FROM station") == std::vector<std::string>{"line-1"});
}

TEST_CASE("the migrations built into zout are the files in schema/", "[store]") {
  const auto on_disk = load_migrations(fs::path(ZOUT_SOURCE_DIR) / "schema");
  const auto& built_in = embedded_migrations();
  REQUIRE(on_disk.size() == built_in.size());
  for (std::size_t i = 0; i < on_disk.size(); ++i) {
    REQUIRE(on_disk[i].number == static_cast<int>(i) + 1);
    REQUIRE(on_disk[i].name == built_in[i].name);
    REQUIRE(on_disk[i].sql == built_in[i].sql);
  }
  REQUIRE(built_in.front().name == "001_tables.sql");
}

TEST_CASE("a database from a newer schema is refused and left byte for byte as it was", "[store]") {
  TempDir dir("zout-store-migrations");
  const fs::path file = dir.path / "newer.db";
  {
    Database db(file, Database::Access::read_write_create);  // rollback journal, as another tool might leave it
    apply_migrations(db, embedded_migrations());
    db.exec("INSERT INTO station (name, first_seen_at, last_seen_at) VALUES "
            "('future', '2027-01-01T00:00:00.000Z', '2027-01-01T00:00:00.000Z'); PRAGMA user_version = 9");
  }
  const std::string before = file_bytes(file);
  std::string message;
  REQUIRE(kind_of_failure([&] { StoreWriter writer(file); }, message) == StoreError::Kind::schema);
  REQUIRE_THAT(message, Catch::Contains(file.string()) && Catch::Contains("schema version 9") &&
                            Catch::Contains("newer than this zout knows (up to 4)") && Catch::Contains("untouched"));
  REQUIRE(file_bytes(file) == before);
  REQUIRE_FALSE(fs::exists(dir.path / "newer.db-wal"));
}

TEST_CASE("a database with tables but no schema version is not ours and is left alone", "[store]") {
  TempDir dir("zout-store-migrations");
  const fs::path file = dir.path / "other.db";
  {
    Database db(file, Database::Access::read_write_create);
    db.exec("CREATE TABLE notes (text TEXT); INSERT INTO notes VALUES ('keep me')");
  }
  const std::string before = file_bytes(file);
  std::string message;
  REQUIRE(kind_of_failure([&] { StoreWriter writer(file); }, message) == StoreError::Kind::schema);
  REQUIRE_THAT(message, Catch::Contains("is not a zout database") && Catch::Contains(file.string()));
  REQUIRE(file_bytes(file) == before);
}

TEST_CASE("a file that is not an SQLite database is refused and left alone", "[store]") {
  TempDir dir("zout-store-migrations");
  const fs::path file = dir.path / "notes.txt";
  write_file(file, std::string(4096, 'x'));
  std::string message;
  REQUIRE(kind_of_failure([&] { StoreWriter writer(file); }, message) == StoreError::Kind::schema);
  REQUIRE_THAT(message, Catch::Contains(file.string()) && Catch::Contains("not a database"));
  REQUIRE(file_bytes(file) == std::string(4096, 'x'));
}

TEST_CASE("an older database gets only the migrations it lacks, and keeps its data", "[store]") {
  TempDir dir("zout-store-migrations");
  const fs::path old_schema = dir.path / "schema-v2";
  fs::create_directories(old_schema);
  for (const auto& m : embedded_migrations()) {
    if (m.number <= 2) write_file(old_schema / m.name, m.sql);
  }
  write_file(old_schema / "README.md", "not a migration: ignored");
  const fs::path file = dir.path / "old.db";
  {
    StoreWriter writer(file, load_migrations(old_schema));
    REQUIRE(writer.database().pragma_int("user_version") == 2);
    REQUIRE(column_of(writer.database(), "SELECT name FROM sqlite_schema WHERE type = 'view'").empty());
    writer.record_unit("CW4-0001", "CW4", std::chrono::system_clock::now());
  }
  StoreWriter writer(file);
  REQUIRE(writer.database().pragma_int("user_version") == 4);
  REQUIRE(column_of(writer.database(), "SELECT count(*) FROM sqlite_schema WHERE type = 'view'") ==
          std::vector<std::string>{"4"});
  REQUIRE(column_of(writer.database(), "SELECT serial || ' ' || model FROM unit") ==
          std::vector<std::string>{"CW4-0001 CW4"});
}

TEST_CASE("a migration that fails is rolled back whole and named", "[store]") {
  TempDir dir("zout-store-migrations");
  const fs::path schema = dir.path / "schema";
  fs::create_directories(schema);
  for (const auto& m : embedded_migrations()) write_file(schema / m.name, m.sql);
  write_file(schema / "005_broken.sql",
             "BEGIN IMMEDIATE;\nCREATE TABLE extra (x INTEGER);\nINSERT INTO no_such_table VALUES (1);\n"
             "PRAGMA user_version = 5;\nCOMMIT;\n");
  const fs::path file = dir.path / "z.db";
  std::string message;
  REQUIRE(kind_of_failure([&] { StoreWriter writer(file, load_migrations(schema)); }, message) ==
          StoreError::Kind::schema);
  REQUIRE_THAT(message, Catch::Contains("005_broken.sql") && Catch::Contains("stays at version 4") &&
                            Catch::Contains("no_such_table"));
  Database db(file, Database::Access::read_only);
  REQUIRE(db.pragma_int("user_version") == 4);
  REQUIRE(column_of(db, "SELECT name FROM sqlite_schema WHERE name = 'extra'").empty());
}

TEST_CASE("migration files must be numbered from 001 without gaps and each be one transaction", "[store]") {
  TempDir dir("zout-store-migrations");
  const auto& first = embedded_migrations().front();
  SECTION("a gap") {
    write_file(dir.path / first.name, first.sql);
    write_file(dir.path / "003_later.sql", "BEGIN IMMEDIATE;\nPRAGMA user_version = 3;\nCOMMIT;\n");
    std::string message;
    REQUIRE(kind_of_failure([&] { load_migrations(dir.path); }, message) == StoreError::Kind::schema);
    REQUIRE_THAT(message, Catch::Contains("003_later.sql") && Catch::Contains("expected number 002"));
  }
  SECTION("a file that is not one transaction") {
    write_file(dir.path / first.name, first.sql);
    write_file(dir.path / "002_loose.sql", "CREATE TABLE loose (x INTEGER);\nPRAGMA user_version = 2;\n");
    std::string message;
    REQUIRE(kind_of_failure([&] { load_migrations(dir.path); }, message) == StoreError::Kind::schema);
    REQUIRE_THAT(message, Catch::Contains("002_loose.sql") && Catch::Contains("must be one transaction"));
  }
  SECTION("a file that sets another version") {
    write_file(dir.path / first.name, first.sql);
    write_file(dir.path / "002_wrong.sql", "BEGIN IMMEDIATE;\nPRAGMA user_version = 7;\nCOMMIT;\n");
    std::string message;
    REQUIRE(kind_of_failure([&] { load_migrations(dir.path); }, message) == StoreError::Kind::schema);
    REQUIRE_THAT(message, Catch::Contains("002_wrong.sql") && Catch::Contains("PRAGMA user_version = 2"));
  }
  SECTION("no migrations at all") {
    std::string message;
    REQUIRE(kind_of_failure([&] { load_migrations(dir.path); }, message) == StoreError::Kind::schema);
    REQUIRE_THAT(message, Catch::Contains("no migrations"));
  }
}

TEST_CASE("migration 004: the views count sweeps and steps from 1 and run_summary names slot and note", "[store]") {
  TempDir dir("zout-store-migrations");
  StoreWriter writer(dir.path / "z.db");
  const auto columns = [&](const std::string& view) {
    return column_of(writer.database(), "SELECT name FROM pragma_table_info('" + view + "')");
  };
  const auto has = [](const std::vector<std::string>& names, const std::string& name) {
    return std::find(names.begin(), names.end(), name) != names.end();
  };
  for (const std::string view : {"iv_curve", "soak_trend"}) {
    INFO(view);
    CHECK(has(columns(view), "sweep"));
    CHECK_FALSE(has(columns(view), "sweep_index"));
  }
  CHECK(has(columns("iv_curve"), "step"));
  CHECK_FALSE(has(columns("iv_curve"), "step_index"));
  for (const std::string column : {"slot", "note", "result_sweep", "result_sweep_id"}) CHECK(has(columns("run_summary"), column));
  const auto at = std::chrono::system_clock::now();
  const auto station = writer.record_station("st", at);
  const auto run = writer.create_run({writer.record_unit("U-1", "", at), writer.record_plan("p", "{}", at), station,
                                      RunKind::production, RunState::running, at, "", ""});
  const auto sweep = writer.start_sweep(run, 0, at);
  PointRecord point;
  point.sweep_id = sweep;
  point.step_index = 0;
  point.set_load_amps = 0.0;
  point.dc_volts = 1.0;
  point.step_started_at = at;
  point.taken_at = at;
  writer.commit_point(point, {{writer.record_instrument({station, "meter", "tcp://x:1", "M", "D", "1", "1"}, at), "dc_volts", 1.0, at}});
  CHECK(column_of(writer.database(), "SELECT sweep || '/' || step FROM iv_curve") == std::vector<std::string>{"1/1"});
}
