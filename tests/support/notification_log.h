#pragma once
// Records the notifications an engine sends (method, params, sending thread) for tests,
// from any thread, and lets a test wait for a run to reach a state.

#include <algorithm>
#include <chrono>
#include <condition_variable>
#include <cstdint>
#include <functional>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include <nlohmann/json.hpp>

#include "daemon/engine/event_log.h"

namespace zout::test {

class NotificationLog {
 public:
  struct Entry {
    std::string method;
    nlohmann::json params;
    std::thread::id thread;
  };

  // The Notify to give the engine; it records into this log, which must outlive it.
  Notify sink() {
    return [this](const std::string& method, const nlohmann::json& params) {
      {
        std::lock_guard lock(mutex_);
        entries_.push_back({method, params, std::this_thread::get_id()});
      }
      changed_.notify_all();
    };
  }

  std::vector<Entry> entries() const {
    std::lock_guard lock(mutex_);
    return entries_;
  }

  // The run's notifications in order, events left out: "run.state:<state>", "point",
  // "sweep.result".
  std::vector<std::string> story(std::int64_t run_id) const {
    std::vector<std::string> out;
    for (const auto& e : entries()) {
      if (e.method == "event" || e.params.value("run_id", std::int64_t{0}) != run_id) continue;
      out.push_back(e.method == "run.state" ? "run.state:" + e.params.at("state").get<std::string>() : e.method);
    }
    return out;
  }

  // The params of every run.state notification of the run, in order.
  std::vector<nlohmann::json> states(std::int64_t run_id) const {
    std::vector<nlohmann::json> out;
    for (const auto& e : entries()) {
      if (e.method == "run.state" && e.params.value("run_id", std::int64_t{0}) == run_id) out.push_back(e.params);
    }
    return out;
  }

  // The codes of the "event" notifications, in order (of one run when `run_id` is not 0).
  std::vector<std::string> event_codes(std::int64_t run_id = 0) const {
    std::vector<std::string> out;
    for (const auto& e : entries()) {
      if (e.method != "event") continue;
      if (run_id != 0 && e.params.value("run_id", std::int64_t{0}) != run_id) continue;
      out.push_back(e.params.at("code").get<std::string>());
    }
    return out;
  }

  // Waits until a run.state notification says the run is in `state`; false on timeout.
  bool wait_for_state(std::int64_t run_id, const std::string& state, std::chrono::milliseconds timeout) {
    return wait_until(timeout, [&](const std::vector<Entry>& entries) {
      return std::any_of(entries.begin(), entries.end(), [&](const Entry& e) {
        return e.method == "run.state" && e.params.value("run_id", std::int64_t{0}) == run_id &&
               e.params.value("state", "") == state;
      });
    });
  }

  // Waits until the run has sent `count` notifications of `method`; false on timeout.
  bool wait_for_count(std::int64_t run_id, const std::string& method, long count, std::chrono::milliseconds timeout) {
    return wait_until(timeout, [&](const std::vector<Entry>& entries) {
      return std::count_if(entries.begin(), entries.end(), [&](const Entry& e) {
               return e.method == method && e.params.value("run_id", std::int64_t{0}) == run_id;
             }) >= count;
    });
  }

 private:
  bool wait_until(std::chrono::milliseconds timeout, const std::function<bool(const std::vector<Entry>&)>& done) {
    std::unique_lock lock(mutex_);
    return changed_.wait_for(lock, timeout, [&] { return done(entries_); });
  }

  mutable std::mutex mutex_;
  std::condition_variable changed_;
  std::vector<Entry> entries_;
};

}  // namespace zout::test
