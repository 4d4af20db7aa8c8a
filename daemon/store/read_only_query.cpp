#include "read_only_query.h"

#include <fmt/format.h>
#include <sqlite3.h>

#include <algorithm>
#include <array>
#include <cctype>
#include <memory>

#include "daemon/store/store_error.h"

namespace zout::store {
namespace {

// PRAGMAs whose argument names a table or index (or a row limit) and that only read.
constexpr std::array<std::string_view, 10> pragmas_taking_a_name = {
    "table_info", "table_xinfo", "index_info", "index_xinfo", "index_list",
    "foreign_key_list", "foreign_key_check", "integrity_check", "quick_check", "table_list"};

std::string lower(std::string_view text) {
  std::string out(text);
  std::transform(out.begin(), out.end(), out.begin(), [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return out;
}

std::string describe_refusal(int action, const char* arg1, const char* arg2) {
  const std::string a = arg1 != nullptr ? arg1 : "";
  const std::string b = arg2 != nullptr ? arg2 : "";
  switch (action) {
    case SQLITE_INSERT: return fmt::format("INSERT into {}", a);
    case SQLITE_UPDATE: return fmt::format("UPDATE of {}.{}", a, b);
    case SQLITE_DELETE: return fmt::format("DELETE from {}", a);
    case SQLITE_CREATE_TABLE:
    case SQLITE_CREATE_TEMP_TABLE: return fmt::format("CREATE TABLE {}", a);
    case SQLITE_CREATE_INDEX:
    case SQLITE_CREATE_TEMP_INDEX: return fmt::format("CREATE INDEX {}", a);
    case SQLITE_CREATE_VIEW:
    case SQLITE_CREATE_TEMP_VIEW: return fmt::format("CREATE VIEW {}", a);
    case SQLITE_CREATE_TRIGGER:
    case SQLITE_CREATE_TEMP_TRIGGER: return fmt::format("CREATE TRIGGER {}", a);
    case SQLITE_CREATE_VTABLE: return fmt::format("CREATE VIRTUAL TABLE {}", a);
    case SQLITE_DROP_TABLE:
    case SQLITE_DROP_TEMP_TABLE: return fmt::format("DROP TABLE {}", a);
    case SQLITE_DROP_INDEX:
    case SQLITE_DROP_TEMP_INDEX: return fmt::format("DROP INDEX {}", a);
    case SQLITE_DROP_VIEW:
    case SQLITE_DROP_TEMP_VIEW: return fmt::format("DROP VIEW {}", a);
    case SQLITE_DROP_TRIGGER:
    case SQLITE_DROP_TEMP_TRIGGER: return fmt::format("DROP TRIGGER {}", a);
    case SQLITE_DROP_VTABLE: return fmt::format("DROP VIRTUAL TABLE {}", a);
    case SQLITE_ALTER_TABLE: return fmt::format("ALTER TABLE {}", b);
    case SQLITE_ATTACH: return fmt::format("ATTACH of another database file ({})", a);
    case SQLITE_DETACH: return fmt::format("DETACH {}", a);
    case SQLITE_PRAGMA: return fmt::format("PRAGMA {} = {} (a PRAGMA with a value can change settings)", a, b);
    case SQLITE_TRANSACTION: return fmt::format("transaction control ({})", a);
    case SQLITE_SAVEPOINT: return fmt::format("SAVEPOINT {}", b);
    case SQLITE_ANALYZE: return "ANALYZE";
    case SQLITE_REINDEX: return "REINDEX";
    case SQLITE_FUNCTION: return fmt::format("the function {}() (loading extensions is not allowed)", b);
    default: return fmt::format("SQLite action {}", action);
  }
}

}  // namespace

ReadOnlyQuery::ReadOnlyQuery(const std::filesystem::path& path) : db_(path, Database::Access::read_only) {
  db_.exec("PRAGMA query_only = ON");
  db_.exec("PRAGMA busy_timeout = 2000");
  sqlite3_set_authorizer(db_.handle(), &ReadOnlyQuery::authorize, this);
  sqlite3_progress_handler(db_.handle(), 1000, &ReadOnlyQuery::check_deadline, this);
}

int ReadOnlyQuery::authorize(void* self, int action, const char* arg1, const char* arg2, const char*, const char*) {
  auto* query = static_cast<ReadOnlyQuery*>(self);
  bool allowed = false;
  switch (action) {
    case SQLITE_SELECT:
    case SQLITE_READ:
    case SQLITE_RECURSIVE:
      allowed = true;
      break;
    case SQLITE_FUNCTION:
      allowed = arg2 == nullptr || lower(arg2) != "load_extension";
      break;
    case SQLITE_INSERT:
    case SQLITE_UPDATE:
    case SQLITE_DELETE:
      // Only the schema tables: SQLite asks this while connecting an eponymous virtual table
      // (pragma_table_info('run')) and before CREATE or DROP, whose own action is then refused
      // by name. A real write to the schema table is still stopped: the statement is not
      // sqlite3_stmt_readonly, the file is open read-only, and DEFENSIVE forbids schema edits.
      allowed = arg1 != nullptr && (std::string_view(arg1) == "sqlite_master" ||
                                    std::string_view(arg1) == "sqlite_temp_master");
      break;
    case SQLITE_PRAGMA:
      allowed = arg2 == nullptr || std::find(pragmas_taking_a_name.begin(), pragmas_taking_a_name.end(),
                                             lower(arg1 != nullptr ? arg1 : "")) != pragmas_taking_a_name.end();
      break;
    default:
      allowed = false;
  }
  if (!allowed && query->refusal_.empty()) query->refusal_ = describe_refusal(action, arg1, arg2);
  return allowed ? SQLITE_OK : SQLITE_DENY;
}

int ReadOnlyQuery::check_deadline(void* self) {
  auto* query = static_cast<ReadOnlyQuery*>(self);
  if (query->has_deadline_ && std::chrono::steady_clock::now() >= query->deadline_) {
    query->timed_out_ = true;
    return 1;  // non-zero interrupts the statement (SQLITE_INTERRUPT)
  }
  return 0;
}

void ReadOnlyQuery::run(std::string_view sql, std::chrono::milliseconds time_limit, const ColumnsSink& columns,
                        const RowSink& row) {
  refusal_.clear();
  timed_out_ = false;
  has_deadline_ = time_limit.count() > 0;
  deadline_ = std::chrono::steady_clock::now() + time_limit;

  sqlite3_stmt* raw = nullptr;
  const char* tail = nullptr;
  int rc = sqlite3_prepare_v2(db_.handle(), sql.data(), static_cast<int>(sql.size()), &raw, &tail);
  std::unique_ptr<sqlite3_stmt, decltype(&sqlite3_finalize)> statement(raw, &sqlite3_finalize);
  if (rc != SQLITE_OK) {
    if (!refusal_.empty() || (rc & 0xFF) == SQLITE_AUTH) {
      throw StoreError(StoreError::Kind::refused,
                       fmt::format("refused: {}; zout query only reads (only zoutd writes to {})", refusal_,
                                   db_.path().string()));
    }
    if (timed_out_) {
      throw StoreError(StoreError::Kind::timed_out, fmt::format("stopped: the query ran past its time limit of {} ms",
                                                                time_limit.count()));
    }
    throw StoreError(StoreError::Kind::bad_sql, fmt::format("SQL error: {}", sqlite3_errmsg(db_.handle())));
  }
  if (!statement) throw StoreError(StoreError::Kind::bad_sql, "no SQL statement given");
  {
    // Anything after the first statement except blanks and comments is a second statement.
    sqlite3_stmt* next = nullptr;
    const std::string_view rest(tail, static_cast<std::size_t>(sql.data() + sql.size() - tail));
    const int next_rc = sqlite3_prepare_v2(db_.handle(), rest.data(), static_cast<int>(rest.size()), &next, nullptr);
    sqlite3_finalize(next);
    refusal_.clear();
    if (next_rc != SQLITE_OK || next != nullptr) {
      throw StoreError(StoreError::Kind::bad_sql,
                       fmt::format("zout query runs one statement at a time; found more after the first: {}", rest));
    }
  }
  if (!sqlite3_stmt_readonly(statement.get())) {
    throw StoreError(StoreError::Kind::refused,
                     fmt::format("refused: the statement would write; zout query only reads (only zoutd writes to {})",
                                 db_.path().string()));
  }

  const int count = sqlite3_column_count(statement.get());
  std::vector<std::string> names;
  for (int i = 0; i < count; ++i) names.emplace_back(sqlite3_column_name(statement.get(), i));
  columns(names);

  std::vector<QueryValue> cells(static_cast<std::size_t>(count));
  while ((rc = sqlite3_step(statement.get())) == SQLITE_ROW) {
    for (int i = 0; i < count; ++i) {
      auto& cell = cells[static_cast<std::size_t>(i)];
      switch (sqlite3_column_type(statement.get(), i)) {
        case SQLITE_INTEGER: cell = static_cast<std::int64_t>(sqlite3_column_int64(statement.get(), i)); break;
        case SQLITE_FLOAT: cell = sqlite3_column_double(statement.get(), i); break;
        case SQLITE_TEXT: {
          const auto* text = reinterpret_cast<const char*>(sqlite3_column_text(statement.get(), i));
          cell = std::string(text, static_cast<std::size_t>(sqlite3_column_bytes(statement.get(), i)));
          break;
        }
        case SQLITE_BLOB: {
          const auto* bytes = static_cast<const unsigned char*>(sqlite3_column_blob(statement.get(), i));
          cell = QueryBlob{std::vector<unsigned char>(bytes, bytes + sqlite3_column_bytes(statement.get(), i))};
          break;
        }
        default: cell = std::monostate{};
      }
    }
    row(cells);
  }
  if (rc != SQLITE_DONE) {
    if (timed_out_) {
      throw StoreError(StoreError::Kind::timed_out,
                       fmt::format("stopped: the query ran past its time limit of {} ms (raise it with --timeout-ms)",
                                   time_limit.count()));
    }
    throw StoreError(StoreError::Kind::failure, fmt::format("{}: {}", db_.where(), sqlite3_errmsg(db_.handle())));
  }
}

}  // namespace zout::store
