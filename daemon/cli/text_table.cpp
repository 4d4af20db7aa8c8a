#include "text_table.h"

#include <algorithm>
#include <stdexcept>

namespace zout::cli {
namespace {

std::size_t display_width(const std::string& text) {
  // Count code points: every byte that does not continue a UTF-8 sequence.
  return static_cast<std::size_t>(
      std::count_if(text.begin(), text.end(), [](char c) { return (static_cast<unsigned char>(c) & 0xC0) != 0x80; }));
}

}  // namespace

void TextTable::add_row(std::vector<std::string> cells) {
  if (cells.size() > header_.size()) throw std::invalid_argument("table row has more cells than the header");
  cells.resize(header_.size());
  rows_.push_back(std::move(cells));
}

std::string TextTable::render() const {
  std::vector<std::size_t> widths;
  for (const auto& cell : header_) widths.push_back(display_width(cell));
  for (const auto& row : rows_) {
    for (std::size_t i = 0; i < row.size(); ++i) widths[i] = std::max(widths[i], display_width(row[i]));
  }
  std::string out;
  const auto append_line = [&](const std::vector<std::string>& cells) {
    std::string line;
    for (std::size_t i = 0; i < cells.size(); ++i) {
      line += cells[i];
      if (i + 1 < cells.size()) line += std::string(widths[i] - display_width(cells[i]) + 2, ' ');
    }
    while (!line.empty() && line.back() == ' ') line.pop_back();
    out += line + "\n";
  };
  append_line(header_);
  for (const auto& row : rows_) append_line(row);
  return out;
}

}  // namespace zout::cli
