#pragma once
// One prepared SQLite statement: named parameters bound with checks, stepped, read by
// column, then reset for reuse. Move-only; finalized on destruction.

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

struct sqlite3;
struct sqlite3_stmt;

namespace zout::store {

class Statement {
 public:
  // Compiles the first statement of `sql` on `db`; `persistent` hints SQLite that it will be
  // reused many times. A compile error is a StoreError quoting the SQL. `where` names the
  // database in messages.
  Statement(sqlite3* db, std::string_view sql, bool persistent, std::string where);
  ~Statement();
  Statement(Statement&& other) noexcept;
  Statement& operator=(Statement&& other) noexcept;
  Statement(const Statement&) = delete;
  Statement& operator=(const Statement&) = delete;

  // Binders take the parameter's name as written in the SQL (":dc_volts"). An unknown name is
  // a StoreError (a programming error caught early). bind_real refuses NaN and ±Inf with a
  // StoreError(bad_input) naming the parameter: SQLite would store NaN as NULL.
  Statement& bind_int(std::string_view name, std::int64_t value);
  Statement& bind_real(std::string_view name, double value);
  Statement& bind_real(std::string_view name, const std::optional<double>& value);  // nullopt is NULL
  Statement& bind_text(std::string_view name, std::string_view value);
  Statement& bind_null(std::string_view name);

  // Runs one step: true when a row is ready, false when done. A constraint failure is a
  // StoreError(bad_input) with SQLite's message (which names the constraint); other errors
  // are StoreError(failure).
  bool step();
  // Steps once and expects to be done; returns the changed-row count of this statement.
  int run();
  // For INSERT ... RETURNING id: steps to completion (so an autocommit write is committed, and
  // a failing commit is reported, before this returns) and gives the returned integer.
  std::int64_t run_returning_id();

  // Column readers for the current row, by 0-based index.
  bool is_null(int column) const;
  std::int64_t column_int(int column) const;
  double column_real(int column) const;
  std::string column_text(int column) const;

  // Resets for the next use and clears bindings. Never throws.
  void reset() noexcept;

  sqlite3_stmt* handle() const { return statement_; }

 private:
  int index_of(std::string_view name) const;

  sqlite3_stmt* statement_ = nullptr;
  std::string where_;
};

}  // namespace zout::store

namespace zout::store {

// Holds a reused statement for one use and resets it when the use ends, however it ends, so
// a cached SELECT never keeps a read transaction open.
class StatementUse {
 public:
  explicit StatementUse(Statement& statement) : statement_(statement) {}
  ~StatementUse() { statement_.reset(); }
  StatementUse(const StatementUse&) = delete;
  StatementUse& operator=(const StatementUse&) = delete;
  Statement* operator->() const { return &statement_; }
  Statement& operator*() const { return statement_; }

 private:
  Statement& statement_;
};

}  // namespace zout::store
