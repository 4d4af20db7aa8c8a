#pragma once
// One open SQLite connection, with a cache of prepared statements. Used from one thread at a
// time. Errors are StoreError naming the file.

#include <cstdint>
#include <filesystem>
#include <map>
#include <string>
#include <string_view>

#include "daemon/store/statement.h"

struct sqlite3;

namespace zout::store {

// Bounds all SQLite memory of the process (page caches included) to about `bytes`, softly:
// SQLite frees cache pages to stay under it. For a long-running daemon whose RSS must stay flat.
void limit_process_memory_bytes(std::int64_t bytes);

class Database {
 public:
  enum class Access {
    read_write_create,  // creates the file when missing (not its directory)
    read_only,          // SQLITE_OPEN_READONLY: the file must exist and is never written
  };

  // Opens `path`. A missing file in read_only, or an unopenable one, is a StoreError.
  Database(std::filesystem::path path, Access access);
  ~Database();
  Database(const Database&) = delete;
  Database& operator=(const Database&) = delete;

  sqlite3* handle() const { return db_; }
  const std::filesystem::path& path() const { return path_; }
  // "database /path/to/file.db", for messages.
  const std::string& where() const { return where_; }

  // Runs every statement of `sql`, discarding rows. Errors name the file.
  void exec(const std::string& sql);
  // Compiles the first statement of `sql` for one-off use.
  Statement prepare(std::string_view sql);
  // The statement for `sql`, compiled on first use and kept until the connection closes.
  // The returned use resets it (and clears its bindings) when it goes out of scope.
  StatementUse cached(const std::string& sql);
  // The integer value of a pragma that returns one, e.g. "user_version".
  std::int64_t pragma_int(std::string_view pragma);
  std::int64_t last_insert_rowid() const;
  // Whether a transaction is open (false in autocommit mode).
  bool in_transaction() const;

 private:
  sqlite3* db_ = nullptr;
  std::filesystem::path path_;
  std::string where_;
  std::map<std::string, Statement, std::less<>> cache_;
};

}  // namespace zout::store
