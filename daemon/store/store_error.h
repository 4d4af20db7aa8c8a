#pragma once
// The one exception type of the store. Its message names what failed and where (the
// database file, the table or field, the migration file); `kind` lets callers such as
// `zout query` choose an exit status without parsing text.

#include <stdexcept>
#include <string>

namespace zout::store {

class StoreError : public std::runtime_error {
 public:
  enum class Kind {
    failure,     // I/O, a busy database, anything not listed below
    bad_input,   // a value the schema or the writer refuses (constraint, non-finite number, bad JSON)
    bad_sql,     // SQL that does not compile (zout query)
    refused,     // SQL that would write, attach a file or load an extension (zout query)
    timed_out,   // a query stopped at its time limit (zout query)
    schema,      // newer schema, not a zout database, a broken migration
  };

  StoreError(Kind kind, const std::string& message) : std::runtime_error(message), kind_(kind) {}
  Kind kind() const noexcept { return kind_; }

 private:
  Kind kind_;
};

}  // namespace zout::store
