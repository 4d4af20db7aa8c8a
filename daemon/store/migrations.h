#pragma once
// The numbered SQL migrations of schema/ and the runner that applies them (DEVELOPERS.md, "Storage").
//
// A migration is a file NNN_words.sql, numbered from 001 without gaps. Each is one
// transaction (BEGIN IMMEDIATE; ... PRAGMA user_version = NNN; COMMIT;), so PRAGMA
// user_version always says which migrations a database has, and the same files apply
// cleanly with the sqlite3 shell: cat schema/*.sql | sqlite3 FILE.

#include <filesystem>
#include <string>
#include <vector>

#include "daemon/store/database.h"

namespace zout::store {

struct Migration {
  int number = 0;     // NNN of the file name
  std::string name;   // the file name, e.g. "001_tables.sql", for messages
  std::string sql;    // the file's text
};

// The migrations compiled into this binary from schema/ at build time, in order.
const std::vector<Migration>& embedded_migrations();

// Reads the migrations in `dir` (files NNN_*.sql; other files are ignored), in order.
// Throws StoreError(schema) naming the file when two share a number, numbering has a gap or
// does not start at 001, or a file is not one transaction that sets its own user_version.
std::vector<Migration> load_migrations(const std::filesystem::path& dir);

// Checks `migrations` as load_migrations does (for migrations built some other way).
void check_migrations(const std::vector<Migration>& migrations);

struct MigrationOutcome {
  int from_version = 0;  // user_version before
  int to_version = 0;    // user_version after
};

// Brings `db` up to the last of `migrations`, applying each missing one in its own
// transaction. Before anything is written it refuses, with StoreError(schema) and without
// touching the file:
//  - a database whose user_version is newer than the last migration (made by a newer zout);
//  - a database with tables but user_version 0 (not a zout database).
// A failing migration is rolled back whole and reported with its file name; the migrations
// before it stay applied.
MigrationOutcome apply_migrations(Database& db, const std::vector<Migration>& migrations);

}  // namespace zout::store
