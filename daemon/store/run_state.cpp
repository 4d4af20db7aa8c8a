#include "run_state.h"

namespace zout::store {

std::string_view to_string(RunState state) {
  for (const auto& entry : run_state_words) {
    if (entry.state == state) return entry.word;
  }
  return "error";
}

std::optional<RunState> run_state_named(std::string_view word) {
  for (const auto& entry : run_state_words) {
    if (entry.word == word) return entry.state;
  }
  return std::nullopt;
}

bool is_final(RunState state) {
  for (const auto& entry : run_state_words) {
    if (entry.state == state) return entry.final;
  }
  return true;
}

bool is_final_state_word(std::string_view word) {
  const auto state = run_state_named(word);
  return state && is_final(*state);
}

std::vector<std::string> run_state_word_list() {
  std::vector<std::string> words;
  for (const auto& entry : run_state_words) words.emplace_back(entry.word);
  return words;
}

}  // namespace zout::store
