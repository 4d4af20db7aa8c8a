#include "migrations.h"

#include <fmt/format.h>

#include <algorithm>
#include <cctype>
#include <fstream>
#include <regex>
#include <sstream>

#include "daemon/store/store_error.h"

namespace zout::store {
namespace {

StoreError schema_error(const std::string& message) { return StoreError(StoreError::Kind::schema, message); }

// The SQL with `--` comments and surrounding whitespace removed, upper-cased, for the shape check.
std::string significant_text(const std::string& sql) {
  std::string out;
  std::istringstream lines(sql);
  for (std::string line; std::getline(lines, line);) {
    const auto comment = line.find("--");
    if (comment != std::string::npos) line.erase(comment);
    out += line;
    out += '\n';
  }
  const auto first = out.find_first_not_of(" \t\r\n");
  const auto last = out.find_last_not_of(" \t\r\n");
  out = first == std::string::npos ? std::string() : out.substr(first, last - first + 1);
  std::transform(out.begin(), out.end(), out.begin(), [](unsigned char c) { return static_cast<char>(std::toupper(c)); });
  return out;
}

void check_shape(const Migration& m) {
  const std::string text = significant_text(m.sql);
  const std::regex begins(R"(^BEGIN(\s+(IMMEDIATE|EXCLUSIVE|DEFERRED))?(\s+TRANSACTION)?\s*;)");
  const std::regex ends(fmt::format(R"(PRAGMA\s+USER_VERSION\s*=\s*0*{}\s*;\s*COMMIT(\s+TRANSACTION)?\s*;$)", m.number));
  if (!std::regex_search(text, begins) || !std::regex_search(text, ends)) {
    throw schema_error(fmt::format(
        "migration {}: must be one transaction: start with BEGIN IMMEDIATE; and end with "
        "PRAGMA user_version = {}; COMMIT; (see schema/README.md)",
        m.name, m.number));
  }
}

}  // namespace

void check_migrations(const std::vector<Migration>& migrations) {
  if (migrations.empty()) throw schema_error("no migrations: expected schema files 001_*.sql onwards");
  for (std::size_t i = 0; i < migrations.size(); ++i) {
    const Migration& m = migrations[i];
    const int expected = static_cast<int>(i) + 1;
    if (m.number != expected) {
      throw schema_error(fmt::format("migration {}: expected number {:03} here (numbers start at 001 with no gaps or repeats)",
                                     m.name, expected));
    }
    check_shape(m);
  }
}

std::vector<Migration> load_migrations(const std::filesystem::path& dir) {
  std::error_code error;
  std::filesystem::directory_iterator entries(dir, error);
  if (error) throw schema_error(fmt::format("migrations directory {}: {}", dir.string(), error.message()));
  const std::regex file_name(R"(^([0-9]{3})_[A-Za-z0-9_]+\.sql$)");
  std::vector<Migration> migrations;
  for (const auto& entry : entries) {
    const std::string name = entry.path().filename().string();
    std::smatch match;
    if (!entry.is_regular_file() || !std::regex_match(name, match, file_name)) continue;
    std::ifstream in(entry.path(), std::ios::binary);
    std::ostringstream text;
    text << in.rdbuf();
    if (!in) throw schema_error(fmt::format("migration {}: cannot read", entry.path().string()));
    migrations.push_back({std::stoi(match[1].str()), name, text.str()});
  }
  std::sort(migrations.begin(), migrations.end(), [](const Migration& a, const Migration& b) {
    return a.number != b.number ? a.number < b.number : a.name < b.name;
  });
  check_migrations(migrations);
  return migrations;
}

MigrationOutcome apply_migrations(Database& db, const std::vector<Migration>& migrations) {
  check_migrations(migrations);
  const int latest = migrations.back().number;
  MigrationOutcome outcome;
  try {
    outcome.from_version = static_cast<int>(db.pragma_int("user_version"));
  } catch (const StoreError& e) {
    throw schema_error(fmt::format("{} (is it an SQLite database?)", e.what()));
  }
  if (outcome.from_version > latest) {
    throw schema_error(fmt::format(
        "{} has schema version {}, newer than this zout knows (up to {}); it was left untouched. "
        "Use the zout that made it, or a newer one.",
        db.where(), outcome.from_version, latest));
  }
  if (outcome.from_version == 0) {
    Statement tables = db.prepare("SELECT count(*) FROM sqlite_schema");
    tables.step();
    if (tables.column_int(0) > 0) {
      throw schema_error(fmt::format(
          "{} is not a zout database: it has tables but no schema version (PRAGMA user_version is 0); "
          "it was left untouched",
          db.where()));
    }
  }
  for (const Migration& m : migrations) {
    if (m.number <= outcome.from_version) continue;
    try {
      db.exec(m.sql);
    } catch (const StoreError& e) {
      if (db.in_transaction()) db.exec("ROLLBACK");
      throw schema_error(fmt::format("migration {} failed and was rolled back; the database stays at version {}: {}",
                                     m.name, m.number - 1, e.what()));
    }
    const auto now = db.pragma_int("user_version");
    if (now != m.number) {
      throw schema_error(fmt::format("migration {} left user_version at {}, not {}", m.name, now, m.number));
    }
  }
  outcome.to_version = latest;
  return outcome;
}

}  // namespace zout::store
