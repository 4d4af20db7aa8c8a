#pragma once
// A write transaction on a Database: BEGIN IMMEDIATE on construction (so the write lock is
// taken up front and a busy database waits its busy timeout here, not half-way through),
// COMMIT on commit(), ROLLBACK when destroyed uncommitted. Nothing half-written survives.

#include "daemon/store/database.h"

namespace zout::store {

class Transaction {
 public:
  explicit Transaction(Database& db) : db_(db) { db_.cached("BEGIN IMMEDIATE")->run(); }
  ~Transaction() {
    if (open_ && db_.in_transaction()) {
      try {
        db_.cached("ROLLBACK")->run();
      } catch (...) {  // a failed rollback leaves SQLite to roll back on close; never throw here
      }
    }
  }
  Transaction(const Transaction&) = delete;
  Transaction& operator=(const Transaction&) = delete;

  // Commits. With synchronous=FULL this returns only once the commit is durable.
  void commit() {
    db_.cached("COMMIT")->run();
    open_ = false;
  }

 private:
  Database& db_;
  bool open_ = true;
};

}  // namespace zout::store
