#pragma once
// Runs one user-written SQL statement against the store with no way to change it (DEVELOPERS.md, "Storage",
// the engine of `zout query`). Layers, each enough on its own for the common cases:
//  1. the file is opened with SQLITE_OPEN_READONLY, and PRAGMA query_only=ON is set;
//  2. extension loading is off (SQLITE_DBCONFIG_ENABLE_LOAD_EXTENSION = 0);
//  3. an authorizer (sqlite3_set_authorizer) admits only reading: SELECT, reading tables and
//     views, recursive CTEs, functions other than load_extension, and PRAGMAs without a
//     value (or naming a table, such as table_info(run)); it refuses everything else by name;
//  4. a compiled statement must be sqlite3_stmt_readonly.
// A progress handler (sqlite3_progress_handler) stops a statement at its time limit.

#include <chrono>
#include <cstdint>
#include <filesystem>
#include <functional>
#include <string>
#include <string_view>
#include <variant>
#include <vector>

#include "daemon/store/database.h"

namespace zout::store {

struct QueryBlob {
  std::vector<unsigned char> bytes;
  bool operator==(const QueryBlob&) const = default;
};

// One cell of a result: NULL, integer, real, text or blob, as SQLite typed it.
using QueryValue = std::variant<std::monostate, std::int64_t, double, std::string, QueryBlob>;

class ReadOnlyQuery {
 public:
  using ColumnsSink = std::function<void(const std::vector<std::string>& names)>;
  using RowSink = std::function<void(const std::vector<QueryValue>& row)>;

  // Opens the database at `path` read-only. A missing or unreadable file is a StoreError(failure).
  explicit ReadOnlyQuery(const std::filesystem::path& path);

  // Runs exactly one statement of `sql`: gives the column names to `columns` once, then each
  // row to `row`, in order. `time_limit` bounds the whole run (zero: no limit). Errors are
  // StoreError: refused (would write, attach, load an extension; the message names what),
  // bad_sql (does not compile, or more than one statement), timed_out, failure.
  void run(std::string_view sql, std::chrono::milliseconds time_limit, const ColumnsSink& columns,
           const RowSink& row);

 private:
  static int authorize(void* self, int action, const char* arg1, const char* arg2, const char* database,
                       const char* trigger_or_view);
  static int check_deadline(void* self);

  Database db_;
  std::string refusal_;  // why the authorizer refused, for the message
  std::chrono::steady_clock::time_point deadline_;
  bool has_deadline_ = false;
  bool timed_out_ = false;
};

}  // namespace zout::store
