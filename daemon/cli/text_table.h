#pragma once
// A plain aligned text table for terminal output: a header row, then rows, columns padded
// to the widest cell (counted in UTF-8 code points), two spaces between columns.

#include <string>
#include <vector>

namespace zout::cli {

class TextTable {
 public:
  explicit TextTable(std::vector<std::string> header) : header_(std::move(header)) {}
  // Adds a row; missing cells are blank, extra cells are an error (std::invalid_argument).
  void add_row(std::vector<std::string> cells);
  // The whole table, each line ending in '\n', trailing spaces trimmed.
  std::string render() const;

 private:
  std::vector<std::string> header_;
  std::vector<std::vector<std::string>> rows_;
};

}  // namespace zout::cli
