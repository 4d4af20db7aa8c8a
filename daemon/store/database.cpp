#include "database.h"

#include <fmt/format.h>
#include <sqlite3.h>

#include "daemon/store/store_error.h"

namespace zout::store {

void limit_process_memory_bytes(std::int64_t bytes) { sqlite3_soft_heap_limit64(bytes); }


Database::Database(std::filesystem::path path, Access access)
    : path_(std::move(path)), where_(fmt::format("database {}", path_.string())) {
  if (access == Access::read_only && !std::filesystem::exists(path_)) {
    throw StoreError(StoreError::Kind::failure, fmt::format("{}: no such file", where_));
  }
  const int flags = access == Access::read_only ? SQLITE_OPEN_READONLY
                                                : SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE;
  const int rc = sqlite3_open_v2(path_.c_str(), &db_, flags | SQLITE_OPEN_NOMUTEX | SQLITE_OPEN_EXRESCODE, nullptr);
  if (rc != SQLITE_OK) {
    const std::string message = db_ != nullptr ? sqlite3_errmsg(db_) : sqlite3_errstr(rc);
    sqlite3_close_v2(db_);
    db_ = nullptr;
    throw StoreError(StoreError::Kind::failure, fmt::format("{}: cannot open: {}", where_, message));
  }
  sqlite3_extended_result_codes(db_, 1);
  // Hardening (SQLite documentation, "Defense Against The Dark Arts"): no extension loading
  // from C or SQL, and no direct edits of the schema table. (TRUSTED_SCHEMA stays on: SQLite
  // 3.40 does not mark json_valid() innocuous, and the schema's CHECKs use it.)
  sqlite3_db_config(db_, SQLITE_DBCONFIG_ENABLE_LOAD_EXTENSION, 0, nullptr);
  sqlite3_db_config(db_, SQLITE_DBCONFIG_DEFENSIVE, 1, nullptr);
}

Database::~Database() {
  cache_.clear();  // finalize every statement before closing
  sqlite3_close_v2(db_);
}

void Database::exec(const std::string& sql) {
  char* error = nullptr;
  const int rc = sqlite3_exec(db_, sql.c_str(), nullptr, nullptr, &error);
  if (rc != SQLITE_OK) {
    const std::string message = error != nullptr ? error : sqlite3_errstr(rc);
    sqlite3_free(error);
    const bool bad_input = (rc & 0xFF) == SQLITE_CONSTRAINT;
    throw StoreError(bad_input ? StoreError::Kind::bad_input : StoreError::Kind::failure,
                     fmt::format("{}: {}", where_, message));
  }
}

Statement Database::prepare(std::string_view sql) { return Statement(db_, sql, false, where_); }

StatementUse Database::cached(const std::string& sql) {
  auto found = cache_.find(sql);
  if (found == cache_.end()) found = cache_.emplace(sql, Statement(db_, sql, true, where_)).first;
  return StatementUse(found->second);
}

std::int64_t Database::pragma_int(std::string_view pragma) {
  Statement statement = prepare(fmt::format("PRAGMA {}", pragma));
  if (!statement.step()) {
    throw StoreError(StoreError::Kind::failure, fmt::format("{}: PRAGMA {} returned nothing", where_, pragma));
  }
  return statement.column_int(0);
}

std::int64_t Database::last_insert_rowid() const { return sqlite3_last_insert_rowid(db_); }

bool Database::in_transaction() const { return sqlite3_get_autocommit(db_) == 0; }

}  // namespace zout::store
