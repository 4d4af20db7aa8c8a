#include "statement.h"

#include <fmt/format.h>
#include <sqlite3.h>

#include <cmath>
#include <utility>

#include "daemon/store/store_error.h"

namespace zout::store {
namespace {

StoreError::Kind kind_of(int rc) {
  return (rc & 0xFF) == SQLITE_CONSTRAINT || (rc & 0xFF) == SQLITE_MISMATCH || (rc & 0xFF) == SQLITE_TOOBIG
             ? StoreError::Kind::bad_input
             : StoreError::Kind::failure;
}

}  // namespace

Statement::Statement(sqlite3* db, std::string_view sql, bool persistent, std::string where) : where_(std::move(where)) {
  const unsigned flags = persistent ? SQLITE_PREPARE_PERSISTENT : 0;
  const int rc = sqlite3_prepare_v3(db, sql.data(), static_cast<int>(sql.size()), flags, &statement_, nullptr);
  if (rc != SQLITE_OK) {
    throw StoreError(StoreError::Kind::failure,
                     fmt::format("{}: cannot compile SQL: {}\n  {}", where_, sqlite3_errmsg(db), sql));
  }
  if (statement_ == nullptr) throw StoreError(StoreError::Kind::failure, fmt::format("{}: empty SQL", where_));
}

Statement::~Statement() { sqlite3_finalize(statement_); }

Statement::Statement(Statement&& other) noexcept
    : statement_(std::exchange(other.statement_, nullptr)), where_(std::move(other.where_)) {}

Statement& Statement::operator=(Statement&& other) noexcept {
  if (this != &other) {
    sqlite3_finalize(statement_);
    statement_ = std::exchange(other.statement_, nullptr);
    where_ = std::move(other.where_);
  }
  return *this;
}

int Statement::index_of(std::string_view name) const {
  const int index = sqlite3_bind_parameter_index(statement_, std::string(name).c_str());
  if (index == 0) {
    throw StoreError(StoreError::Kind::failure,
                     fmt::format("{}: no parameter {} in: {}", where_, name, sqlite3_sql(statement_)));
  }
  return index;
}

Statement& Statement::bind_int(std::string_view name, std::int64_t value) {
  sqlite3_bind_int64(statement_, index_of(name), value);
  return *this;
}

Statement& Statement::bind_real(std::string_view name, double value) {
  if (!std::isfinite(value)) {
    throw StoreError(StoreError::Kind::bad_input,
                     fmt::format("{}: {} must be a finite number, not {}", where_, name.substr(1), value));
  }
  sqlite3_bind_double(statement_, index_of(name), value);
  return *this;
}

Statement& Statement::bind_real(std::string_view name, const std::optional<double>& value) {
  return value ? bind_real(name, *value) : bind_null(name);
}

Statement& Statement::bind_text(std::string_view name, std::string_view value) {
  sqlite3_bind_text64(statement_, index_of(name), value.data(), value.size(), SQLITE_TRANSIENT, SQLITE_UTF8);
  return *this;
}

Statement& Statement::bind_null(std::string_view name) {
  sqlite3_bind_null(statement_, index_of(name));
  return *this;
}

bool Statement::step() {
  const int rc = sqlite3_step(statement_);
  if (rc == SQLITE_ROW) return true;
  if (rc == SQLITE_DONE) return false;
  sqlite3* db = sqlite3_db_handle(statement_);
  const std::string message = sqlite3_errmsg(db);
  const int extended = sqlite3_extended_errcode(db);
  sqlite3_reset(statement_);
  throw StoreError(kind_of(extended), fmt::format("{}: {}", where_, message));
}

int Statement::run() {
  if (step()) {
    throw StoreError(StoreError::Kind::failure,
                     fmt::format("{}: statement returned rows where none were expected: {}", where_, sqlite3_sql(statement_)));
  }
  return sqlite3_changes(sqlite3_db_handle(statement_));
}

std::int64_t Statement::run_returning_id() {
  if (!step()) {
    throw StoreError(StoreError::Kind::failure,
                     fmt::format("{}: statement returned no id: {}", where_, sqlite3_sql(statement_)));
  }
  const std::int64_t id = column_int(0);
  while (step()) {
  }
  return id;
}

bool Statement::is_null(int column) const { return sqlite3_column_type(statement_, column) == SQLITE_NULL; }

std::int64_t Statement::column_int(int column) const { return sqlite3_column_int64(statement_, column); }

double Statement::column_real(int column) const { return sqlite3_column_double(statement_, column); }

std::string Statement::column_text(int column) const {
  const auto* text = sqlite3_column_text(statement_, column);
  return text == nullptr ? std::string()
                         : std::string(reinterpret_cast<const char*>(text),
                                       static_cast<std::size_t>(sqlite3_column_bytes(statement_, column)));
}

void Statement::reset() noexcept {
  sqlite3_reset(statement_);
  sqlite3_clear_bindings(statement_);
}

}  // namespace zout::store
