#pragma once
// The states of a run, defined once: the enum, the word the schema, the api and every client
// use for it, and whether it is final. The schema's CHECK on run.state lists the same words
// (schema/001_tables.sql); tests/unit/store_vocabulary_test.cpp fails when the two disagree.
//
//   queued -> running | aborted | error
//   running -> passed | failed | aborted | interrupted | error

#include <array>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace zout::store {

enum class RunState { queued, running, passed, failed, aborted, interrupted, error };

struct RunStateWord {
  RunState state;
  std::string_view word;
  bool final;  // the run has ended; its state never changes again
};

inline constexpr std::array<RunStateWord, 7> run_state_words = {{
    {RunState::queued, "queued", false},
    {RunState::running, "running", false},
    {RunState::passed, "passed", true},
    {RunState::failed, "failed", true},
    {RunState::aborted, "aborted", true},
    {RunState::interrupted, "interrupted", true},
    {RunState::error, "error", true},
}};

// The state's word ("queued", "running", ...).
std::string_view to_string(RunState state);
// The state a word names; nullopt for any other text.
std::optional<RunState> run_state_named(std::string_view word);
// Whether `state` is final (passed, failed, aborted, interrupted, error).
bool is_final(RunState state);
// Whether `word` names a final state; false for an unknown word.
bool is_final_state_word(std::string_view word);
// Every state's word, in lifecycle order, for option checks and error messages.
std::vector<std::string> run_state_word_list();

}  // namespace zout::store
